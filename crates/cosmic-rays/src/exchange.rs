//! Local (per-cell) CR–wave–gas exchange: implicit flux relaxation, exact logistic wave
//! integration, exactly energy- and momentum-conserving bookkeeping (physics-detail §2.6 a–g).
//!
//! Realizability. Relaxing a flux F towards v_a h moves the momentum (F − v_a h)/c_r² to the
//! waves and gas and costs the CRs the energy v_a (F − v_a h)/c_r² (streaming loss, energy
//! v_a × momentum); over the whole relaxation the exact local solution of §2.6 b–f loses
//! Δe_c = −v_a D_0/(c_r² − γ_c v_a²), D_0 = F − γ_c v_a e_c (strong-coupling limit, [derived]:
//! dD/dt = −σ(c_r² − γ_c v_a²) D and de_c = (v_a/c_r²) dF). For a realizable state
//! |F| ≤ c_r e_c (the energy flux of particles moving at most at c_r) that is at most
//! v_a e_c/(c_r − γ_c v_a) < e_c whenever c_r > (1 + γ_c) v_a, so e_c stays positive. The
//! explicit transport can leave a cell far outside that set next to an unresolved jump of
//! e_c (a fixed boundary energy density thousands of times the interior, with the
//! asymptotic-preserving e_c dissipation reduced to the streaming speed while F still gets the
//! full c_r² ∂_x P_c kick): then no step size keeps e_c ≥ 0, and halving the substep only
//! marched on at dt/2^30. [`exchange_cell`] therefore (i) brings such a cell back to
//! |F| = c_r e_c before the exchange, handing the removed CR momentum (F − F')/c_r² to the gas
//! and paying the gas kinetic-energy change from e_c (energy and the reduced momentum
//! ρv + F/c_r² conserved exactly, counted in [`Transfer::flux_limited`]), and (ii) stops after
//! [`ExchangeTolerances::max_substeps`] substeps with a [`Stall`] instead of looping.
//!
//! Waves here are labelled by x-direction: `er` moves at +v_a, `el` at −v_a. The solver maps
//! (e_+, e_−) onto (er, el) with s = sign(B_x), which makes results independent of the sign of
//! B_x (label symmetry, physics-detail §2.2).

use crate::params::{ExchangeTolerances, TransportModel, WorkForm};

/// Variables of one cell entering/leaving the exchange.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Cell {
    /// CR energy density.
    pub ec: f64,
    /// Comoving CR flux (x).
    pub f: f64,
    /// Wave energy moving in +x.
    pub er: f64,
    /// Wave energy moving in −x.
    pub el: f64,
    /// Gas momentum density.
    pub m: f64,
    /// Gas total energy density.
    pub en: f64,
}

/// Energies moved by the exchange in one cell over one call (energy densities, code units).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Transfer {
    /// CR energy → waves (W_+ + W_−; negative when waves lose to CRs).
    pub cr_to_waves: f64,
    /// Wave energy → gas heat (damping; in the streaming model the streaming heating).
    pub waves_to_heat: f64,
    /// CR energy → gas by the work of the CR force (ΔK, or −v ∂_x P_c Δt).
    pub work_on_gas: f64,
    /// Energy added to waves by the floor (taken from the gas).
    pub floor: f64,
    /// Substeps used.
    pub substeps: u32,
    /// Substeps accepted without meeting the tolerances.
    pub tol_failures: u32,
    /// Substeps rejected (halved and retried).
    pub rejected: u32,
    /// 1 when the entry state was non-realizable (|F| > c_r e_c) and F was brought back to
    /// c_r e_c (momentum to the gas, kinetic energy from the CRs, included in `work_on_gas`).
    pub flux_limited: u32,
}

/// Why [`exchange_cell`] gave up on a cell.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StallReason {
    /// The CR energy density entering the exchange is negative or not finite (or F is not
    /// finite): no substep can meet e_c ≥ 0.
    BadEntry,
    /// [`ExchangeTolerances::max_substeps`] substeps were used before the end of the call.
    SubstepLimit,
}

/// A cell whose exchange could not be completed (returned instead of looping).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stall {
    /// Why.
    pub reason: StallReason,
    /// The cell as it entered the call (code units).
    pub entry: Cell,
    /// The cell reached when giving up.
    pub reached: Cell,
    /// Substeps tried (accepted + rejected).
    pub substeps: u32,
    /// Time of the call already integrated [code time].
    pub done: f64,
    /// Length of the call [code time].
    pub dt: f64,
}

/// Constant per-cell data of the exchange.
#[derive(Debug, Clone, Copy)]
pub struct CellCtx {
    /// Gas density.
    pub rho: f64,
    /// Alfvén speed v_a (> 0).
    pub va: f64,
    /// c_r².
    pub cr2: f64,
    /// σ̂ = α_ν Ω/(c² e_B).
    pub sigma_hat: f64,
    /// γ_c.
    pub gamma_c: f64,
    /// Absolute wave floor.
    pub floor: f64,
    /// ∂_x P_c (only used with [`WorkForm::PressureGradient`]).
    pub grad_pc: f64,
    /// Work form.
    pub work_form: WorkForm,
    /// Model.
    pub model: TransportModel,
    /// e^{−tol_a} (wave-energy ratio bound of a substep).
    pub ratio_lo: f64,
    /// e^{tol_a}.
    pub ratio_hi: f64,
}

/// Exact solution of dε/dt = A ε − b ε² over `dt` (b ≥ 0, ε0 > 0) and ∫₀^dt ε dt.
///
/// ε(t) = ε0 (1 + A g)/(1 + b ε0 g), g = (e^{At} − 1)/A; ∫ε = ln(1 + b ε0 g)/b (b → 0: ε0 g).
/// Written without overflow for large positive A t.
pub fn logistic(e0: f64, a: f64, b: f64, dt: f64) -> (f64, f64) {
    let at = a * dt;
    if at > 1.0 {
        // g' = (1 − e^{−At})/A; ε = ε0/(e^{−At} + b ε0 g').
        let em = (-at).exp();
        let gp = -(-at).exp_m1() / a;
        let e1 = e0 / (em + b * e0 * gp);
        let int = if b * e0 * gp / em < 1e-8 || b == 0.0 {
            // b ε0 g tiny (or zero): ∫ε ≈ ε0 g (1 − bε0 g/2).
            let g = gp / em;
            e0 * g * (1.0 - 0.5 * b * e0 * g)
        } else {
            (at + (em + b * e0 * gp).ln()) / b
        };
        (e1, int)
    } else {
        // g = (e^{At} − 1)/A; Taylor series for small |At| (truncation (At)⁴/120 < 1e-14).
        let g = if at.abs() < 1e-3 {
            dt * (1.0 + at * (0.5 + at * (1.0 / 6.0 + at / 24.0)))
        } else {
            at.exp_m1() / a
        };
        let e1 = e0 * (1.0 + a * g) / (1.0 + b * e0 * g);
        let x = b * e0 * g;
        let int = if x.abs() < 1e-12 {
            e0 * g * (1.0 - 0.5 * x)
        } else {
            x.ln_1p() / b
        };
        (e1.max(0.0), int)
    }
}

/// One exchange substep without tolerance control. `damp_r`, `damp_l` are (a_d, b).
/// Returns the new cell, the transfer and whether the accuracy tolerances were met.
#[inline]
pub fn substep(
    ctx: &CellCtx,
    c: Cell,
    dt: f64,
    damp_r: (f64, f64),
    damp_l: (f64, f64),
    tol: &ExchangeTolerances,
) -> (Cell, Transfer, bool) {
    let h0 = ctx.gamma_c * c.ec;
    let x = dt * ctx.cr2;
    let va = ctx.va;
    let mut out = c;
    let mut tr = Transfer {
        substeps: 1,
        ..Transfer::default()
    };
    let mut ok = true;
    let mut heat = 0.0;
    let mut w = 0.0; // CR → waves (or → heat directly in the streaming model)
    let f1;
    match ctx.model {
        TransportModel::SelfConfined => {
            let sr = ctx.sigma_hat * c.er;
            let sl = ctx.sigma_hat * c.el;
            f1 = (c.f + x * va * h0 * (sr - sl)) / (1.0 + x * (sr + sl));
            // Energy growth rates of the waves (physics-detail §2.6 c).
            let gr = va * ctx.sigma_hat * (f1 - va * h0);
            let gl = -va * ctx.sigma_hat * (f1 + va * h0);
            let (er1, ir) = logistic(c.er, gr - damp_r.0, damp_r.1, dt);
            let (el1, il) = logistic(c.el, gl - damp_l.0, damp_l.1, dt);
            let wr = gr * ir;
            let wl = gl * il;
            let hr = wr - (er1 - c.er);
            let hl = wl - (el1 - c.el);
            w = wr + wl;
            heat = hr + hl;
            // |Δ ln ε| ≤ tol_a, tested as a ratio bound (no logarithm in the hot loop).
            let (lo, hi) = (ctx.ratio_lo, ctx.ratio_hi);
            let rr = er1.max(ctx.floor);
            let rl = el1.max(ctx.floor);
            if !(rr >= lo * c.er && rr <= hi * c.er && rl >= lo * c.el && rl <= hi * c.el) {
                ok = false;
            }
            out.er = er1;
            out.el = el1;
            tr.cr_to_waves = w;
            tr.waves_to_heat = heat;
        }
        TransportModel::FixedKappa { kappa } => {
            let s = 1.0 / (3.0 * kappa);
            f1 = c.f / (1.0 + x * s);
        }
        TransportModel::Streaming {
            kappa,
            kappa_decoupled,
        } => {
            let ss = 1.0 / (3.0 * kappa);
            let s0 = 1.0 / (3.0 * kappa_decoupled);
            let vh = va * h0;
            let fm = c.f / (1.0 + x * s0);
            let (ff, sr, sl) = if fm > vh {
                let ff = (c.f + x * ss * vh) / (1.0 + x * (s0 + ss));
                (ff, ss * (ff - vh), 0.0)
            } else if fm < -vh {
                let ff = (c.f - x * ss * vh) / (1.0 + x * (s0 + ss));
                (ff, 0.0, ss * (ff + vh))
            } else {
                (fm, 0.0, 0.0)
            };
            f1 = ff;
            w = va * (sr - sl) * dt;
            heat = w;
            tr.cr_to_waves = w;
            tr.waves_to_heat = w;
        }
    }
    // Gas momentum: exact conservation of ρv + F/c_r² (§2.6 e).
    let m1 = c.m - (f1 - c.f) / ctx.cr2;
    let dk = (m1 - c.m) * (m1 + c.m) / (2.0 * ctx.rho);
    let work = match ctx.work_form {
        WorkForm::Scattering => dk,
        WorkForm::PressureGradient => -0.5 * (m1 + c.m) / ctx.rho * ctx.grad_pc * dt,
    };
    out.f = f1;
    out.m = m1;
    out.ec = c.ec - w - work;
    out.en = c.en + work + heat;
    tr.work_on_gas = work;
    // Floors on the wave energies, paid by the gas.
    if matches!(ctx.model, TransportModel::SelfConfined) {
        if out.er < ctx.floor {
            tr.floor += ctx.floor - out.er;
            out.er = ctx.floor;
        }
        if out.el < ctx.floor {
            tr.floor += ctx.floor - out.el;
            out.el = ctx.floor;
        }
        out.en -= tr.floor;
    }
    if !(out.ec >= 0.0 && (out.ec - c.ec).abs() <= tol.tol_c * c.ec) && out.ec != c.ec {
        ok = false;
    }
    if !out.ec.is_finite() || !out.f.is_finite() {
        ok = false;
    }
    (out, tr, ok)
}

/// Adds `b` to `a`.
#[inline]
pub fn add_transfer(a: &mut Transfer, b: &Transfer) {
    a.cr_to_waves += b.cr_to_waves;
    a.waves_to_heat += b.waves_to_heat;
    a.work_on_gas += b.work_on_gas;
    a.floor += b.floor;
    a.substeps += b.substeps;
    a.tol_failures += b.tol_failures;
    a.rejected += b.rejected;
    a.flux_limited += b.flux_limited;
}

/// Brings a non-realizable cell (|F| > c_r e_c) back to |F| = c_r e_c conservatively: the
/// removed CR momentum (F − F')/c_r² goes to the gas (ρv + F/c_r² unchanged) and the gas
/// kinetic-energy change ΔK is paid by the CRs (e_c + E unchanged). Returns ΔK, or `None` when
/// the cell was realizable (nothing changed). Needs e_c ≥ 0.
#[inline]
pub fn limit_flux(ctx: &CellCtx, c: &mut Cell) -> Option<f64> {
    let fmax = ctx.cr2.sqrt() * c.ec;
    if c.f.abs() <= fmax {
        return None;
    }
    let f1 = fmax.copysign(c.f);
    let m1 = c.m + (c.f - f1) / ctx.cr2;
    let dk = (m1 - c.m) * (m1 + c.m) / (2.0 * ctx.rho);
    c.f = f1;
    c.m = m1;
    c.ec -= dk;
    c.en += dk;
    Some(dk)
}

/// Full exchange of one cell over `dt` with adaptive substeps (halving on tolerance failure,
/// doubling after success). `rates(e, r_not_l)` supplies the damping coefficients.
///
/// Work is bounded: at most [`ExchangeTolerances::max_substeps`] substeps (accepted and
/// rejected) per call, else a [`Stall`]. A negative or non-finite entry e_c is a [`Stall`] at
/// once. A non-realizable entry flux is limited first (see the module docs).
#[inline]
pub fn exchange_cell(
    ctx: &CellCtx,
    mut c: Cell,
    dt: f64,
    tol: &ExchangeTolerances,
    mut rates: impl FnMut(f64, bool) -> (f64, f64),
) -> Result<(Cell, Transfer), Stall> {
    let entry = c;
    let stall = |reason, reached, substeps, done| Stall {
        reason,
        entry,
        reached,
        substeps,
        done,
        dt,
    };
    if !(c.ec >= 0.0 && c.ec.is_finite() && c.f.is_finite()) {
        return Err(stall(StallReason::BadEntry, c, 0, 0.0));
    }
    let mut total = Transfer::default();
    // Entry floor (transport may have left a wave energy below it).
    if matches!(ctx.model, TransportModel::SelfConfined) {
        let mut fl = 0.0;
        if c.er.is_nan() || c.er < ctx.floor {
            fl += ctx.floor - c.er;
            c.er = ctx.floor;
        }
        if c.el.is_nan() || c.el < ctx.floor {
            fl += ctx.floor - c.el;
            c.el = ctx.floor;
        }
        c.en -= fl;
        total.floor += fl;
    }
    // Realizability (only the models whose exchange drains e_c through F).
    if !matches!(ctx.model, TransportModel::FixedKappa { .. }) {
        if let Some(dk) = limit_flux(ctx, &mut c) {
            total.work_on_gas += dk;
            total.flux_limited = 1;
            if c.ec.is_nan() || c.ec < 0.0 {
                return Err(stall(StallReason::BadEntry, c, 0, 0.0));
            }
        }
    }
    let mut remaining = dt;
    let mut h = dt;
    let mut halvings = 0u32;
    let mut tried = 0u32;
    while remaining > 0.0 {
        if tried >= tol.max_substeps {
            return Err(stall(StallReason::SubstepLimit, c, tried, dt - remaining));
        }
        tried += 1;
        let sub = h.min(remaining);
        let dr = rates(c.er, true);
        let dl = rates(c.el, false);
        let (c1, tr, ok) = substep(ctx, c, sub, dr, dl, tol);
        if ok || halvings >= tol.max_halvings {
            let mut tr = tr;
            if !ok {
                tr.tol_failures = 1;
            }
            add_transfer(&mut total, &tr);
            c = c1;
            remaining -= sub;
            if remaining <= dt * 1e-14 {
                break;
            }
            if ok && halvings > 0 {
                h = 2.0 * sub;
                halvings -= 1;
            }
        } else {
            total.rejected += 1;
            h = 0.5 * sub;
            halvings += 1;
        }
    }
    Ok((c, total))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn logistic_matches_closed_forms() {
        // b = 0: pure exponential.
        let (e, i) = logistic(2.0, 0.3, 0.0, 1.5);
        assert!((e - 2.0 * (0.45f64).exp()).abs() < 1e-14);
        assert!((i - 2.0 * (0.45f64.exp() - 1.0) / 0.3).abs() < 1e-13);
        // A = 0: dε/dt = −bε² → ε = ε0/(1 + bε0 t), ∫ = ln(1 + bε0 t)/b.
        let (e, i) = logistic(2.0, 0.0, 0.5, 3.0);
        assert!((e - 2.0 / 4.0).abs() < 1e-14);
        assert!((i - 4.0f64.ln() / 0.5).abs() < 1e-13);
        // Large growth with saturation: ε → A/b.
        let (e, i) = logistic(1e-6, 50.0, 2.0, 10.0);
        assert!((e - 25.0).abs() < 1e-10);
        // dε/dt = Aε − bε² integrated: ε1 − ε0 = A∫ε − b∫ε²; check ∫ε by finite differences in t.
        let d = 1e-6;
        let (ea, _) = logistic(1e-6, 50.0, 2.0, 10.0 + d);
        let (eb, _) = logistic(1e-6, 50.0, 2.0, 10.0 - d);
        let (_, ia) = logistic(1e-6, 50.0, 2.0, 10.0 + d);
        let (_, ib) = logistic(1e-6, 50.0, 2.0, 10.0 - d);
        assert!(((ia - ib) / (2.0 * d) - 0.5 * (ea + eb)).abs() < 1e-5 * e);
        assert!(i.is_finite());
        // Decay branch continuity across at = 1.
        let (e1, i1) = logistic(1.0, 1.0 - 1e-12, 0.3, 1.0);
        let (e2, i2) = logistic(1.0, 1.0 + 1e-12, 0.3, 1.0);
        assert!((e1 - e2).abs() < 1e-10 && (i1 - i2).abs() < 1e-10);
    }
}
