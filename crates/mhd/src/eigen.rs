//! Right eigenvectors of the 1D ideal-MHD system, for linear-wave initial conditions.
//!
//! The linearised primitive system ∂_t δW + A(W) ∂_x δW = 0 with W = (ρ, v_x, v_y, v_z, p,
//! b̃_y, b̃_z) (b̃ = B/√4π, Heaviside–Lorentz) has the seven eigenvalues v_x ± c_f, v_x ± c_a,
//! v_x ± c_s and v_x. The right eigenvectors use the normalisation of Roe & Balsara (1996,
//! SIAM J. Appl. Math. 56, 57) with α_f² = (a² − c_s²)/(c_f² − c_s²),
//! α_s² = (c_f² − a²)/(c_f² − c_s²), β_{y,z} = b̃_{y,z}/|b̃_⊥| (1/√2 each when b̃_⊥ = 0),
//! which stays finite at the degenerate points (b̃_⊥ = 0 and/or a = c_a). That every vector
//! returned satisfies A r = λ r is checked by the unit tests (residual ≈ round-off).
//!
//! Units of a primitive eigenvector: the density slot is of order ρ (fast/slow: ρα; entropy:
//! ρ), velocities of order the wave speed, p of order ρa² and b̃ of order √ρ a (or √ρ for the
//! Alfvén wave). Multiply by a dimensionless amplitude (e.g. 1e-6) to build a linear wave
//! δW(x) = A r cos(k x).

use crate::config::Eos;
use crate::physics::{fast2, Gas};
use crate::state::Primitive;

/// Wave family of the 1D MHD system.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum WaveFamily {
    /// Fast magnetosonic wave, λ = v_x ± c_f.
    Fast,
    /// Alfvén (rotational) wave, λ = v_x ± c_a.
    Alfven,
    /// Slow magnetosonic wave, λ = v_x ± c_s.
    Slow,
    /// Entropy (contact) wave, λ = v_x (`direction` is ignored). Isothermal gas: no such wave
    /// exists; a pure density perturbation is not an eigenvector there.
    Entropy,
}

/// Primitive right eigenvector and eigenvalue.
///
/// `direction` is +1 (right-going, λ = v_x + c) or −1 (left-going); any other value is
/// treated as its sign (0 → +1).
/// Returns (λ, r_W) with r_W ordered (δρ, δv_x, δv_y, δv_z, δp, δb̃_y, δb̃_z). For an
/// isothermal gas δp = c_s² δρ.
pub fn primitive_eigenvector(
    bg: &Primitive,
    bx: f64,
    eos: &Eos,
    family: WaveFamily,
    direction: i8,
) -> (f64, [f64; 7]) {
    let g = Gas::new(eos);
    let rho = bg.rho;
    let a2 = g.a2(rho, bg.p);
    let a = a2.sqrt();
    let s = if direction < 0 { -1.0 } else { 1.0 };
    let sig = if bx < 0.0 { -1.0 } else { 1.0 };
    let sq = rho.sqrt();
    let bperp = (bg.by * bg.by + bg.bz * bg.bz).sqrt();
    let (betay, betaz) = if bperp > 1e-14 * (bx.abs() + sq * a) {
        (bg.by / bperp, bg.bz / bperp)
    } else {
        (
            std::f64::consts::FRAC_1_SQRT_2,
            std::f64::consts::FRAC_1_SQRT_2,
        )
    };
    let ca2 = bx * bx / rho;
    let (cf2, cs2) = if bperp * bperp <= 1e-28 * rho * (a2 + ca2) {
        // b̃_⊥ = 0: the speeds are exactly a and c_a (avoids round-off in α_f, α_s).
        (a2.max(ca2), a2.min(ca2))
    } else {
        let cf2 = fast2(a2, rho, bx, bg.by, bg.bz);
        (cf2, if cf2 > 0.0 { a2 * ca2 / cf2 } else { 0.0 })
    };
    let (cf, cs, ca) = (cf2.sqrt(), cs2.sqrt(), ca2.sqrt());
    let dc = cf2 - cs2;
    let (alf, als) = if dc > 1e-14 * cf2 {
        (
            ((a2 - cs2) / dc).max(0.0).sqrt(),
            ((cf2 - a2) / dc).max(0.0).sqrt(),
        )
    } else {
        (1.0, 0.0)
    };
    let gp = rho * a2; // γp (ideal) or ρ c_s² (isothermal)
    match family {
        WaveFamily::Entropy => (bg.vx, [1.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0]),
        WaveFamily::Fast => (
            bg.vx + s * cf,
            [
                rho * alf,
                s * alf * cf,
                -s * als * cs * betay * sig,
                -s * als * cs * betaz * sig,
                alf * gp,
                als * sq * a * betay,
                als * sq * a * betaz,
            ],
        ),
        WaveFamily::Slow => (
            bg.vx + s * cs,
            [
                rho * als,
                s * als * cs,
                s * alf * cf * betay * sig,
                s * alf * cf * betaz * sig,
                als * gp,
                -alf * sq * a * betay,
                -alf * sq * a * betaz,
            ],
        ),
        WaveFamily::Alfven => (
            bg.vx + s * ca,
            [
                0.0,
                0.0,
                s * sig * betaz,
                -s * sig * betay,
                0.0,
                -sq * betaz,
                sq * betay,
            ],
        ),
    }
}

/// Converts a primitive perturbation δW at background `bg` into the conserved perturbation
/// δU = (∂U/∂W) δW, ordered (δρ, δ(ρv_x), δ(ρv_y), δ(ρv_z), δE, δb̃_y, δb̃_z). Isothermal: δE = 0.
pub fn primitive_to_conserved_perturbation(bg: &Primitive, eos: &Eos, dw: &[f64; 7]) -> [f64; 7] {
    let g = Gas::new(eos);
    let [dr, du, dv, dwz, dp, dby, dbz] = *dw;
    let v2 = bg.vx * bg.vx + bg.vy * bg.vy + bg.vz * bg.vz;
    let de = if g.iso {
        0.0
    } else {
        dp * g.inv_gm1
            + 0.5 * v2 * dr
            + bg.rho * (bg.vx * du + bg.vy * dv + bg.vz * dwz)
            + bg.by * dby
            + bg.bz * dbz
    };
    [
        dr,
        bg.vx * dr + bg.rho * du,
        bg.vy * dr + bg.rho * dv,
        bg.vz * dr + bg.rho * dwz,
        de,
        dby,
        dbz,
    ]
}

/// Linear wave of one family: returns (phase speed λ, conserved right eigenvector).
///
/// The conserved eigenvector is ∂U/∂W applied to the Roe–Balsara primitive eigenvector of
/// [`primitive_eigenvector`]; it is an eigenvector of the conserved flux Jacobian ∂F/∂U with
/// eigenvalue λ. `bx` is the constant normal field (Heaviside–Lorentz).
pub fn linear_wave(
    bg: &Primitive,
    bx: f64,
    eos: &Eos,
    family: WaveFamily,
    direction: i8,
) -> (f64, [f64; 7]) {
    let (lam, rw) = primitive_eigenvector(bg, bx, eos, family, direction);
    (lam, primitive_to_conserved_perturbation(bg, eos, &rw))
}
