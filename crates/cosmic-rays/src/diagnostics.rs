//! Snapshot diagnostics (physics-detail §8), interior cells only, physical (±) wave labels.

use crate::damping::{WaveDamping, WaveDirection};
use crate::params::TransportModel;
use crate::solver::CrSolver;
use crate::state::CrState;
use sluice_mhd::State;

/// CR diagnostics per interior cell (code units). Allocates; meant for snapshots.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct CrDiagnostics {
    /// Alfvén speed v_a used by the CR terms (0 in the fixed-κ model).
    pub v_a: Vec<f64>,
    /// Effective CR transport speed v_st = F/(e_c + P_c) (x-component, signed).
    pub v_st: Vec<f64>,
    /// v_st / v_a (NaN when v_a = 0).
    pub v_st_over_v_a: Vec<f64>,
    /// Streaming excess (F − u_A,eff h)/h with the cross-helicity-weighted u_A,eff.
    pub streaming_excess: Vec<f64>,
    /// κ_+ = 1/(3σ_+) (∞ when σ_+ = 0).
    pub kappa_plus: Vec<f64>,
    /// κ_− = 1/(3σ_−).
    pub kappa_minus: Vec<f64>,
    /// κ_eff = κ_+ κ_−/(κ_+ + κ_−) = 1/(3(σ_+ + σ_−)).
    pub kappa_eff: Vec<f64>,
    /// Energy growth rate of forward waves Γ_g,+ = u_A σ̂ (F − u_A h) s … [1/time] (self-confined).
    pub growth_plus: Vec<f64>,
    /// Energy growth rate of backward waves Γ_g,− [1/time].
    pub growth_minus: Vec<f64>,
    /// Instantaneous damping heating Q_+ + Q_− = Σ (a_d ε + b ε²) [energy/(volume·time)].
    pub damping_heating: Vec<f64>,
    /// Heating rate averaged over the last transport/exchange call (solver record).
    pub heating_last_step: Vec<f64>,
    /// Streaming heating −u_A,eff ∂_x P_c, u_A,eff = v_a (e_R − e_L)/(e_R + e_L) (x-labelled;
    /// equals −u_A ∂_x P_c when backward waves vanish).
    pub streaming_heating: Vec<f64>,
    /// CR force on the gas S_+ + S_−.
    pub cr_force: Vec<f64>,
    /// −∂_x P_c (to compare with the force; equal in the quasi-steady limit).
    pub minus_grad_pc: Vec<f64>,
    /// Streaming part of the model's quasi-steady flux, F_st = u_st h [energy/(area·time)]:
    /// u_st = v_a (e_R − e_L)/(e_R + e_L) (self-confined, x-labelled waves), −v_a sign(∂_x P_c)
    /// (streaming model; 0 where ∂_x P_c = 0), 0 (fixed κ).
    pub streaming_flux: Vec<f64>,
    /// Diffusive part of the same flux, F_d = −3 κ_d ∂_x P_c (= −κ_d ∂_x e_c for γ_c = 4/3)
    /// with κ_d = 1/(3(σ_+ + σ_−)) (self-confined, fixed κ) or the coupled κ (streaming model),
    /// limited at the free-streaming flux: F_diff = F_d/(1 + |F_d|/(c_r e_c)).
    pub diffusive_flux: Vec<f64>,
    /// |F_st| / (|F_st| + |F_diff|) (dimensionless, NaN where both vanish).
    pub streaming_fraction: Vec<f64>,
}

impl CrSolver {
    /// Computes the snapshot diagnostics of the current state. CR ghost cells must be filled
    /// (they are after every `transport` call).
    pub fn diagnostics(
        &self,
        cr: &CrState,
        gas: &State,
        damping: &dyn WaveDamping,
    ) -> CrDiagnostics {
        let g = gas.grid;
        let p = self.params();
        let pos = gas.bx >= 0.0;
        let eb = 0.5 * gas.bx * gas.bx;
        let sh = p.alpha_nu * p.omega / (p.c * p.c * eb);
        let mut d = CrDiagnostics::default();
        let dx = g.dx();
        for j in g.interior() {
            let (er, el) = if pos {
                (cr.e_plus[j], cr.e_minus[j])
            } else {
                (cr.e_minus[j], cr.e_plus[j])
            };
            let va = match p.model {
                TransportModel::FixedKappa { .. } => 0.0,
                _ => self.alfven_pub(gas, j),
            };
            let h = p.gamma_c * cr.e_c[j];
            let f = cr.f[j];
            let (sr, sl) = match p.model {
                TransportModel::SelfConfined => (sh * er, sh * el),
                TransportModel::FixedKappa { kappa } => (1.0 / (6.0 * kappa), 1.0 / (6.0 * kappa)),
                TransportModel::Streaming {
                    kappa,
                    kappa_decoupled,
                } => {
                    let s0 = 0.5 / (3.0 * kappa_decoupled);
                    let ss = 1.0 / (3.0 * kappa);
                    (
                        s0 + if f > va * h { ss } else { 0.0 },
                        s0 + if f < -va * h { ss } else { 0.0 },
                    )
                }
            };
            let gpc = (p.gamma_c - 1.0) * (cr.e_c[j + 1] - cr.e_c[j - 1]) / (2.0 * dx);
            let wsum = er + el;
            let ua = if wsum > 0.0 && matches!(p.model, TransportModel::SelfConfined) {
                va * (er - el) / wsum
            } else if matches!(p.model, TransportModel::Streaming { .. }) {
                -va * gpc.signum()
            } else {
                0.0
            };
            let vst = if h > 0.0 { f / h } else { 0.0 };
            d.v_a.push(va);
            d.v_st.push(vst);
            d.v_st_over_v_a
                .push(if va > 0.0 { vst / va } else { f64::NAN });
            d.streaming_excess
                .push(if h > 0.0 { (f - ua * h) / h } else { 0.0 });
            let (sp, sm) = if pos { (sr, sl) } else { (sl, sr) };
            d.kappa_plus.push(1.0 / (3.0 * sp));
            d.kappa_minus.push(1.0 / (3.0 * sm));
            d.kappa_eff.push(1.0 / (3.0 * (sp + sm)));
            let (gr, gl) = match p.model {
                TransportModel::SelfConfined => (va * sh * (f - va * h), -va * sh * (f + va * h)),
                _ => (0.0, 0.0),
            };
            let (gp, gm) = if pos { (gr, gl) } else { (gl, gr) };
            d.growth_plus.push(gp);
            d.growth_minus.push(gm);
            let q = if matches!(p.model, TransportModel::SelfConfined) {
                let (ep, em) = (cr.e_plus[j], cr.e_minus[j]);
                let (a1, b1) = damping.rates(j, gas, ep, WaveDirection::Forward);
                let (a2, b2) = damping.rates(j, gas, em, WaveDirection::Backward);
                a1 * ep + b1 * ep * ep + a2 * em + b2 * em * em
            } else {
                0.0
            };
            d.damping_heating.push(q);
            d.heating_last_step.push(self.heating_rate()[j]);
            d.streaming_heating.push(-ua * gpc);
            d.cr_force.push(sr * (f - va * h) + sl * (f + va * h));
            d.minus_grad_pc.push(-gpc);
            // Quasi-steady (C2) flux F = u_st h − 3 κ_d ∂_x P_c (physics-detail §2.4).
            let (u_st, kappa_d) = match p.model {
                TransportModel::SelfConfined => (
                    if wsum > 0.0 {
                        va * (er - el) / wsum
                    } else {
                        0.0
                    },
                    1.0 / (3.0 * (sr + sl)),
                ),
                TransportModel::FixedKappa { kappa } => (0.0, kappa),
                TransportModel::Streaming { kappa, .. } => {
                    (if gpc == 0.0 { 0.0 } else { -va * gpc.signum() }, kappa)
                }
            };
            // The diffusive part is flux-limited at the free-streaming flux c_r e_c
            // (harmonic limiter, common practice): where κ_d is huge (waves at the floor) the
            // quasi-steady relation would give an unbounded −3 κ_d ∂_x P_c.
            let fd_raw = -3.0 * kappa_d * gpc;
            let f_free = p.c_r * cr.e_c[j];
            let fd = if f_free > 0.0 && fd_raw.is_finite() {
                fd_raw / (1.0 + fd_raw.abs() / f_free)
            } else {
                0.0
            };
            let fs = u_st * h;
            let tot = fs.abs() + fd.abs();
            d.streaming_flux.push(fs);
            d.diffusive_flux.push(fd);
            d.streaming_fraction
                .push(if tot > 0.0 { fs.abs() / tot } else { f64::NAN });
        }
        d
    }
}
