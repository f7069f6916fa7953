//! Point-wise MHD physics: conserved variables, fluxes and characteristic speeds.
//!
//! Units: whatever consistent code units the caller uses; magnetic field in
//! Heaviside–Lorentz form b̃ = B/√(4π), so the magnetic pressure is |b̃|²/2 and
//! v_A = |b̃_x|/√ρ. Vectors of seven numbers are ordered
//! (ρ, ρv_x, ρv_y, ρv_z, E, b̃_y, b̃_z) for conserved quantities and fluxes, and
//! (ρ, v_x, v_y, v_z, p, b̃_y, b̃_z) for primitive ones. For an isothermal gas the energy
//! slot of a conserved vector or flux is 0 (the energy equation is not evolved).

use crate::config::Eos;
use crate::state::Primitive;

/// Index of ρ in a 7-vector.
pub const I_RHO: usize = 0;
/// Index of v_x (primitive) or ρv_x (conserved).
pub const I_VX: usize = 1;
/// Index of v_y (primitive) or ρv_y (conserved).
pub const I_VY: usize = 2;
/// Index of v_z (primitive) or ρv_z (conserved).
pub const I_VZ: usize = 3;
/// Index of p (primitive) or E (conserved).
pub const I_EN: usize = 4;
/// Index of b̃_y.
pub const I_BY: usize = 5;
/// Index of b̃_z.
pub const I_BZ: usize = 6;

/// Compact equation-of-state data for the inner loops.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Gas {
    pub gamma: f64,
    /// 1/(γ−1) (0 when isothermal).
    pub inv_gm1: f64,
    /// γ−1 (0 when isothermal).
    pub gm1: f64,
    pub iso: bool,
    /// c_s² of the isothermal gas.
    pub cs2: f64,
}

impl Gas {
    pub fn new(eos: &Eos) -> Self {
        match *eos {
            Eos::Ideal { gamma } => Gas {
                gamma,
                inv_gm1: 1.0 / (gamma - 1.0),
                gm1: gamma - 1.0,
                iso: false,
                cs2: 0.0,
            },
            Eos::Isothermal { cs } => Gas {
                gamma: 1.0,
                inv_gm1: 0.0,
                gm1: 0.0,
                iso: true,
                cs2: cs * cs,
            },
        }
    }

    /// Squared sound speed a² (γp/ρ or c_s²).
    #[inline(always)]
    pub fn a2(&self, rho: f64, p: f64) -> f64 {
        if self.iso {
            self.cs2
        } else {
            self.gamma * p / rho
        }
    }
}

/// Squared fast magnetosonic speed from a², ρ and b̃, with the cancellation-free
/// discriminant (a² − b_t²)² + 4 a² b_⊥² (physics-detail §1.2).
#[inline(always)]
pub(crate) fn fast2(a2: f64, rho: f64, bx: f64, by: f64, bz: f64) -> f64 {
    let inv_rho = 1.0 / rho;
    let bperp2 = (by * by + bz * bz) * inv_rho;
    let bt2 = bx * bx * inv_rho + bperp2;
    let d = a2 - bt2;
    0.5 * (a2 + bt2 + (d * d + 4.0 * a2 * bperp2).sqrt())
}

/// Conserved vector of a primitive 7-vector.
#[inline(always)]
pub(crate) fn cons(w: &[f64; 7], bx: f64, g: &Gas) -> [f64; 7] {
    let rho = w[I_RHO];
    let b2 = bx * bx + w[I_BY] * w[I_BY] + w[I_BZ] * w[I_BZ];
    let v2 = w[I_VX] * w[I_VX] + w[I_VY] * w[I_VY] + w[I_VZ] * w[I_VZ];
    let e = if g.iso {
        0.0
    } else {
        w[I_EN] * g.inv_gm1 + 0.5 * (rho * v2 + b2)
    };
    [
        rho,
        rho * w[I_VX],
        rho * w[I_VY],
        rho * w[I_VZ],
        e,
        w[I_BY],
        w[I_BZ],
    ]
}

/// Physical flux of a primitive 7-vector, given its conserved energy `e`.
#[inline(always)]
pub(crate) fn flux_with_e(w: &[f64; 7], e: f64, bx: f64, g: &Gas) -> [f64; 7] {
    let [rho, u, v, ww, p, by, bz] = *w;
    let pt = p + 0.5 * (bx * bx + by * by + bz * bz);
    let m = rho * u;
    let fe = if g.iso {
        0.0
    } else {
        (e + pt) * u - bx * (u * bx + v * by + ww * bz)
    };
    [
        m,
        m * u + pt - bx * bx,
        m * v - bx * by,
        m * ww - bx * bz,
        fe,
        by * u - bx * v,
        bz * u - bx * ww,
    ]
}

/// Converts a [`Primitive`] to a primitive 7-vector (isothermal: p = c_s² ρ).
#[inline]
pub(crate) fn prim_array(w: &Primitive, g: &Gas) -> [f64; 7] {
    let p = if g.iso { g.cs2 * w.rho } else { w.p };
    [w.rho, w.vx, w.vy, w.vz, p, w.by, w.bz]
}

/// Converts a primitive 7-vector to a [`Primitive`].
#[inline]
#[allow(dead_code)]
pub(crate) fn prim_struct(w: &[f64; 7]) -> Primitive {
    Primitive {
        rho: w[0],
        vx: w[1],
        vy: w[2],
        vz: w[3],
        p: w[4],
        by: w[5],
        bz: w[6],
    }
}

/// Conserved vector (ρ, ρv_x, ρv_y, ρv_z, E, b̃_y, b̃_z) of a primitive state with normal
/// field `bx` (Heaviside–Lorentz). E includes b̃_x²/2. Isothermal: E slot is 0.
pub fn conserved(w: &Primitive, bx: f64, eos: &Eos) -> [f64; 7] {
    let g = Gas::new(eos);
    cons(&prim_array(w, &g), bx, &g)
}

/// Physical x-flux F(U) of ideal MHD (physics-detail §1.1 in b̃ units) of a primitive state,
/// ordered like [`conserved`]. Isothermal: energy flux is 0.
pub fn flux(w: &Primitive, bx: f64, eos: &Eos) -> [f64; 7] {
    let g = Gas::new(eos);
    let wa = prim_array(w, &g);
    let u = cons(&wa, bx, &g);
    flux_with_e(&wa, u[I_EN], bx, &g)
}

/// Sound speed a = √(γp/ρ) (ideal) or c_s (isothermal), code velocity units.
pub fn sound_speed(w: &Primitive, eos: &Eos) -> f64 {
    let g = Gas::new(eos);
    g.a2(w.rho, w.p).sqrt()
}

/// Alfvén speed along x, c_a = |b̃_x|/√ρ.
pub fn alfven_speed(w: &Primitive, bx: f64) -> f64 {
    bx.abs() / w.rho.sqrt()
}

/// Fast magnetosonic speed c_f along x (physics-detail §1.2, cancellation-free form).
pub fn fast_speed(w: &Primitive, bx: f64, eos: &Eos) -> f64 {
    let g = Gas::new(eos);
    fast2(g.a2(w.rho, w.p), w.rho, bx, w.by, w.bz).sqrt()
}

/// Slow magnetosonic speed c_s along x, computed as c_s² = a² c_a² / c_f² (no cancellation).
pub fn slow_speed(w: &Primitive, bx: f64, eos: &Eos) -> f64 {
    let g = Gas::new(eos);
    let a2 = g.a2(w.rho, w.p);
    let cf2 = fast2(a2, w.rho, bx, w.by, w.bz);
    if cf2 > 0.0 {
        (a2 * bx * bx / w.rho / cf2).sqrt()
    } else {
        0.0
    }
}
