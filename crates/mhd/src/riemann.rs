//! Approximate Riemann solvers: HLLE and HLLD (physics-detail §1.3, b̃ units).
//!
//! The inner-loop versions work on primitive 7-vectors (ρ, v_x, v_y, v_z, p, b̃_y, b̃_z)
//! and return the flux 7-vector (ρ, ρv_x, ρv_y, ρv_z, E, b̃_y, b̃_z). Public wrappers taking
//! [`Primitive`] are provided for tests and other crates.

use crate::config::Eos;
use crate::physics::{cons, fast2, flux_with_e, prim_array, Gas};
use crate::state::Primitive;

/// Default relative threshold ε_deg of the HLLD degeneracy test |D_α| < ε_deg (ρ_α(S_α−u_α)² + b̃_x²).
pub const HLLD_DEGENERACY_EPS: f64 = 1e-12;

/// Left or right state prepared once per face: primitive vector, conserved vector, flux,
/// fast speed.
#[derive(Clone, Copy)]
struct Side {
    w: [f64; 7],
    u: [f64; 7],
    f: [f64; 7],
    cf: f64,
}

#[inline(always)]
fn side(w: &[f64; 7], bx: f64, g: &Gas) -> Side {
    let u = cons(w, bx, g);
    let f = flux_with_e(w, u[4], bx, g);
    let cf = fast2(g.a2(w[0], w[4]), w[0], bx, w[5], w[6]).sqrt();
    Side { w: *w, u, f, cf }
}

#[inline(always)]
fn hll_of(l: &Side, r: &Side, sl: f64, sr: f64) -> [f64; 7] {
    if sl >= 0.0 {
        return l.f;
    }
    if sr <= 0.0 {
        return r.f;
    }
    let inv = 1.0 / (sr - sl);
    let mut out = [0.0; 7];
    for k in 0..7 {
        out[k] = (sr * l.f[k] - sl * r.f[k] + sl * sr * (r.u[k] - l.u[k])) * inv;
    }
    out
}

/// HLLE flux (Harten, Lax & van Leer 1983; Einfeldt 1988) with the Davis-type bounds
/// S_L = min(u_L − c_fL, u_R − c_fR), S_R = max(u_L + c_fL, u_R + c_fR).
#[inline]
pub(crate) fn hlle(wl: &[f64; 7], wr: &[f64; 7], bx: f64, g: &Gas) -> [f64; 7] {
    let l = side(wl, bx, g);
    let r = side(wr, bx, g);
    let sl = (wl[1] - l.cf).min(wr[1] - r.cf);
    let sr = (wl[1] + l.cf).max(wr[1] + r.cf);
    hll_of(&l, &r, sl, sr)
}

/// One star state (single-starred region) of HLLD.
#[derive(Clone, Copy)]
struct Star {
    rho: f64,
    v: f64,
    w: f64,
    by: f64,
    bz: f64,
    e: f64,
}

/// HLLD flux (Miyoshi & Kusano 2005, J. Comput. Phys. 208, 315), exactly as written in
/// physics-detail §1.3. Returns `None` when the face must fall back to HLLE (ρ* ≤ 0,
/// p* ≤ `p_floor`, broken wave ordering or a NaN). Ideal gas only.
#[inline]
pub(crate) fn hlld(
    wl: &[f64; 7],
    wr: &[f64; 7],
    bx: f64,
    g: &Gas,
    p_floor: f64,
    eps_deg: f64,
) -> Option<[f64; 7]> {
    let l = side(wl, bx, g);
    let r = side(wr, bx, g);
    let (ul, ur) = (wl[1], wr[1]);
    let cmax = l.cf.max(r.cf);
    let sl = ul.min(ur) - cmax;
    let sr = ul.max(ur) + cmax;
    if sl >= 0.0 {
        return Some(l.f);
    }
    if sr <= 0.0 {
        return Some(r.f);
    }
    let bx2 = bx * bx;
    let ptl = wl[4] + 0.5 * (bx2 + wl[5] * wl[5] + wl[6] * wl[6]);
    let ptr = wr[4] + 0.5 * (bx2 + wr[5] * wr[5] + wr[6] * wr[6]);
    let sul = sl - ul;
    let sur = sr - ur;
    let rl = wl[0] * sul; // ρ_L (S_L − u_L) < 0
    let rr = wr[0] * sur; // ρ_R (S_R − u_R) > 0
    let den = rr - rl;
    let sm = (rr * ur - rl * ul - ptr + ptl) / den;
    // Symmetric form of p*_T (MK05 eq. 41); equals p_TL + ρ_L(S_L−u_L)(S_M−u_L).
    let pts = (rr * ptl - rl * ptr + rl * rr * (ur - ul)) / den;

    // pt = total pressure p_T,α of the side (computed above, same expression).
    let star = |s: &Side, sa: f64, ra: f64, pt: f64| -> Star {
        // sa = S_α, ra = ρ_α (S_α − u_α)
        let w = &s.w;
        let u = w[1];
        let inv_sm = 1.0 / (sa - sm);
        let rho = ra * inv_sm;
        let d = ra * (sa - sm) - bx2;
        let scale = ra * (sa - u) + bx2;
        let (v, ww, by, bz) = if d.abs() < eps_deg * scale {
            (w[2], w[3], w[5], w[6])
        } else {
            let invd = 1.0 / d;
            let fv = bx * (sm - u) * invd;
            let fb = (ra * (sa - u) - bx2) * invd;
            (w[2] - fv * w[5], w[3] - fv * w[6], w[5] * fb, w[6] * fb)
        };
        let vb = u * bx + w[2] * w[5] + w[3] * w[6];
        let vbs = sm * bx + v * by + ww * bz;
        let e = ((sa - u) * s.u[4] - pt * u + pts * sm + bx * (vb - vbs)) * inv_sm;
        Star {
            rho,
            v,
            w: ww,
            by,
            bz,
            e,
        }
    };
    let stl = star(&l, sl, rl, ptl);
    let str_ = star(&r, sr, rr, ptr);

    // Positivity of the star states (gas pressure above the floor).
    let pstar = |s: &Star| {
        g.gm1
            * (s.e
                - 0.5 * s.rho * (sm * sm + s.v * s.v + s.w * s.w)
                - 0.5 * (bx2 + s.by * s.by + s.bz * s.bz))
    };
    if !(stl.rho > 0.0 && str_.rho > 0.0 && pstar(&stl) > p_floor && pstar(&str_) > p_floor) {
        return None;
    }
    let sql = stl.rho.sqrt();
    let sqr = str_.rho.sqrt();
    // Ordering S_L ≤ S*_L ≤ S_M ≤ S*_R ≤ S_R. Equality S_L = S*_L occurs legitimately when
    // b̃_⊥ = 0 and c_a ≥ a (fast = Alfvén speed), so the outer inequalities are tested with
    // a round-off tolerance and the Alfvén speeds clamped into [S_L, S_R].
    //
    // If the two single-starred states have the same transverse velocity and field, the
    // double-starred states equal them (MK05 eqs. 59–63 reduce to identities) and the
    // rotational discontinuities carry no jump: then S*_α are irrelevant and only
    // S_L ≤ S_M ≤ S_R is required. This happens for b̃_⊥ = 0 on both sides, where the
    // HLL-estimated ρ* can otherwise put S*_α outside [S_L, S_R] although nothing depends
    // on it.
    let tol = 1e-12 * (sr - sl);
    let ssl = sm - bx.abs() / sql;
    let ssr = sm + bx.abs() / sqr;
    let jump = (str_.v - stl.v).abs()
        + (str_.w - stl.w).abs()
        + (str_.by - stl.by).abs()
        + (str_.bz - stl.bz).abs();
    let tscale = (stl.v.abs() + str_.v.abs() + stl.w.abs() + str_.w.abs()) * (sql + sqr)
        + stl.by.abs()
        + str_.by.abs()
        + stl.bz.abs()
        + str_.bz.abs();
    let trivial_rotation = jump <= 1e-14 * tscale;
    if trivial_rotation {
        if !(sl <= sm && sm <= sr) {
            return None;
        }
        let out = if sm >= 0.0 {
            fstar_of(&l, sl, &ustar_of(&stl, sm))
        } else {
            fstar_of(&r, sr, &ustar_of(&str_, sm))
        };
        return if out.iter().all(|x| x.is_finite()) {
            Some(out)
        } else {
            None
        };
    }
    if !(sl - tol <= ssl && ssl <= sm && sm <= ssr && ssr <= sr + tol) {
        return None;
    }
    let ssl = ssl.max(sl);
    let ssr = ssr.min(sr);
    let ustar = |s: &Star| ustar_of(s, sm);
    let fstar = fstar_of;
    let out = if ssl >= 0.0 {
        fstar(&l, sl, &ustar(&stl))
    } else if ssr <= 0.0 {
        fstar(&r, sr, &ustar(&str_))
    } else {
        // Rotational (double-starred) states. When b̃_x = 0, S*_L = S_M = S*_R and this
        // branch is only reached for S_M = 0 exactly; the single-starred flux is used.
        let usl = ustar(&stl);
        let usr = ustar(&str_);
        if bx2 <= eps_deg * pts.abs() {
            if sm >= 0.0 {
                fstar(&l, sl, &usl)
            } else {
                fstar(&r, sr, &usr)
            }
        } else {
            let sig = bx.signum();
            let inv = 1.0 / (sql + sqr);
            let vss = (sql * stl.v + sqr * str_.v + (str_.by - stl.by) * sig) * inv;
            let wss = (sql * stl.w + sqr * str_.w + (str_.bz - stl.bz) * sig) * inv;
            let byss = (sql * str_.by + sqr * stl.by + sql * sqr * (str_.v - stl.v) * sig) * inv;
            let bzss = (sql * str_.bz + sqr * stl.bz + sql * sqr * (str_.w - stl.w) * sig) * inv;
            let vbss = sm * bx + vss * byss + wss * bzss;
            if sm >= 0.0 {
                let vbs = sm * bx + stl.v * stl.by + stl.w * stl.bz;
                let e = stl.e - sql * (vbs - vbss) * sig;
                let uss = [
                    stl.rho,
                    stl.rho * sm,
                    stl.rho * vss,
                    stl.rho * wss,
                    e,
                    byss,
                    bzss,
                ];
                let fs = fstar(&l, sl, &usl);
                let mut f = [0.0; 7];
                for k in 0..7 {
                    f[k] = fs[k] + ssl * (uss[k] - usl[k]);
                }
                f
            } else {
                let vbs = sm * bx + str_.v * str_.by + str_.w * str_.bz;
                let e = str_.e + sqr * (vbs - vbss) * sig;
                let uss = [
                    str_.rho,
                    str_.rho * sm,
                    str_.rho * vss,
                    str_.rho * wss,
                    e,
                    byss,
                    bzss,
                ];
                let fs = fstar(&r, sr, &usr);
                let mut f = [0.0; 7];
                for k in 0..7 {
                    f[k] = fs[k] + ssr * (uss[k] - usr[k]);
                }
                f
            }
        }
    };
    if out.iter().all(|x| x.is_finite()) {
        Some(out)
    } else {
        None
    }
}

#[inline(always)]
fn ustar_of(s: &Star, sm: f64) -> [f64; 7] {
    [s.rho, s.rho * sm, s.rho * s.v, s.rho * s.w, s.e, s.by, s.bz]
}

#[inline(always)]
fn fstar_of(side: &Side, sa: f64, us: &[f64; 7]) -> [f64; 7] {
    let mut f = [0.0; 7];
    for k in 0..7 {
        f[k] = side.f[k] + sa * (us[k] - side.u[k]);
    }
    f
}

/// HLLE interface flux between primitive states `left` and `right` (public wrapper).
pub fn hlle_flux(left: &Primitive, right: &Primitive, bx: f64, eos: &Eos) -> [f64; 7] {
    let g = Gas::new(eos);
    hlle(&prim_array(left, &g), &prim_array(right, &g), bx, &g)
}

/// HLLD interface flux (public wrapper). Returns `None` where the solver falls back to HLLE
/// (see [`crate::MhdSolver`]); for an isothermal gas always `None` (the isothermal HLLD of
/// Mignone 2007 is not implemented; the solver uses HLLE for isothermal gas).
pub fn hlld_flux(
    left: &Primitive,
    right: &Primitive,
    bx: f64,
    eos: &Eos,
    p_floor: f64,
) -> Option<[f64; 7]> {
    let g = Gas::new(eos);
    if g.iso {
        return None;
    }
    hlld(
        &prim_array(left, &g),
        &prim_array(right, &g),
        bx,
        &g,
        p_floor,
        HLLD_DEGENERACY_EPS,
    )
}
