//! Parameters of the CR module and their validation.

use crate::CrError;
pub use sluice_mhd::Limiter;

/// How CR transport along the field is closed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum TransportModel {
    /// Self-confinement (Thomas & Pfrommer 2019, MNRAS 485, 2977): the energies of forward and
    /// backward gyroresonant Alfvén waves are evolved and set the scattering rates
    /// σ_± = α_ν Ω e_± /(c² e_B). Default.
    SelfConfined,
    /// Fixed diffusion coefficient κ [code length²/time]: waves are not evolved, no streaming
    /// (u_A ≡ 0 in the CR terms), total scattering σ = 1/(3κ).
    FixedKappa {
        /// Diffusion coefficient along the field, > 0.
        kappa: f64,
    },
    /// Strong-coupling streaming limit. CRs are scattered with σ_s = 1/(3 κ) by the waves of the
    /// direction in which they stream faster than v_a, and only by a weak background
    /// σ_0 = 1/(3 κ_decoupled) otherwise (instantaneous wave growth and damping; the energy the
    /// CRs lose to the waves is heat at once). Gives f → v_a h sign(−∂_x P_c) + κ-diffusion.
    Streaming {
        /// Residual diffusion coefficient of coupled CRs, > 0 (small).
        kappa: f64,
        /// Diffusion coefficient of decoupled CRs (|F| < v_a h), > 0; `f64::INFINITY` = none.
        kappa_decoupled: f64,
    },
}

/// Which mass density enters the Alfvén speed v_a = |b̃_x|/√ρ_A.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AlfvenDensity {
    /// ρ_A = ρ (total gas density).
    Total,
    /// ρ_A = x_i ρ with the per-cell ion mass fraction x_i held by the solver (default 1).
    Ion,
}

/// Which form the work of the CR force on the gas takes (physics-detail §2.2).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum WorkForm {
    /// Gas energy gains v (S_+ + S_−) (the change of gas kinetic energy by the scattering force);
    /// exact energy and momentum consistency. Default.
    Scattering,
    /// Gas energy gains −v ∂_x P_c (TP19 form); energy still conserved exactly, work and momentum
    /// consistent to O(v/c_r²).
    PressureGradient,
}

/// Where the CR–wave–gas exchange is applied.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Coupling {
    /// Inside every Runge–Kutta stage of every transport subcycle (implicit-explicit). Needed
    /// whenever the flux relaxation rate c_r² σ exceeds 1/Δt (the diffusive and streaming
    /// regimes): otherwise F would grow by c_r² ∂_x P_c Δt unchecked during the transport.
    /// `exchange` is then a no-op. Default.
    InTransport,
    /// Transport is purely hyperbolic; the coupling is applied by `exchange` (Strang-split by
    /// the driver). Only accurate when c_r² σ Δt ≲ 1.
    Split,
}

/// CR boundary condition of one side.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum CrBoundary {
    /// Zero-gradient ghost cells.
    Outflow,
    /// Mirror: e_c, wave energies mirrored (forward ↔ backward x-direction), F → −F.
    Reflecting,
    /// Periodic (both sides must be periodic).
    Periodic,
    /// Fixed CR energy flux into the domain [energy/(area·time), code units, ≥ 0 allowed either
    /// sign]; other variables zero-gradient.
    FixedFlux(f64),
    /// Fixed CR energy density in the ghost cells (≥ 0), F and waves zero-gradient.
    FixedEnergyDensity(f64),
}

/// Left and right CR boundaries.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CrBoundaryPair {
    /// At x_min.
    pub left: CrBoundary,
    /// At x_max.
    pub right: CrBoundary,
}

/// Accuracy control of the local exchange substeps (physics-detail §2.6).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ExchangeTolerances {
    /// Largest accepted |Δe_c|/e_c per substep (default 0.05).
    pub tol_c: f64,
    /// Largest accepted |Δ ln e_±| per substep (default 0.5).
    pub tol_a: f64,
    /// Largest number of halvings of a substep (default 30, at most 40 so that the smallest
    /// substep still advances the time in f64); beyond it the substep is accepted and counted
    /// as a tolerance failure.
    pub max_halvings: u32,
    /// Hard limit on the substeps (accepted and rejected) of one cell in one exchange call
    /// (default 100000). Reaching it stops the run with [`crate::CrError::ExchangeStalled`]
    /// naming the cell and its values instead of looping on.
    pub max_substeps: u32,
}

impl Default for ExchangeTolerances {
    fn default() -> Self {
        Self {
            tol_c: 0.05,
            tol_a: 0.5,
            max_halvings: 30,
            max_substeps: 100_000,
        }
    }
}

/// All CR parameters, code units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CrParams {
    /// Reduced speed of light c_r [velocity], > 0 (see [`crate::auto_c_r`]).
    pub c_r: f64,
    /// True speed of light c [velocity] (enters κ = c²/(3ν)), ≥ c_r.
    pub c: f64,
    /// CR adiabatic index γ_c (default 4/3), in (1, 2].
    pub gamma_c: f64,
    /// Scattering prefactor α_ν in ν_± = α_ν Ω e_±/e_B (default 3π/16, from memory, TP19).
    pub alpha_nu: f64,
    /// Gyro-frequency Ω of the characteristic CR [1/time], > 0.
    pub omega: f64,
    /// Wave-energy floor as a fraction of e_B = b̃_x²/2 (default 1e-10), > 0.
    pub wave_floor: f64,
    /// Density in the Alfvén speed.
    pub alfven_density: AlfvenDensity,
    /// PLM slope limiter.
    pub limiter: Limiter,
    /// Asymptotic-preserving reduction of the HLL dissipation (default off, physics-detail §2.7).
    pub asymptotic_preserving: bool,
    /// Work form.
    pub work_form: WorkForm,
    /// Transport model.
    pub model: TransportModel,
    /// Boundaries.
    pub boundaries: CrBoundaryPair,
    /// Exchange accuracy control.
    pub tolerances: ExchangeTolerances,
    /// Courant number of the transport subcycles, 0 < C ≤ 1 (default 0.8, physics-detail §7);
    /// Δt_cr = C Δx / max(|v| + c_r/√3, |v| + v_a).
    pub cfl: f64,
    /// Largest number of subcycles per `transport` call (default 100000).
    pub max_subcycles: usize,
    /// Where the exchange is applied.
    pub coupling: Coupling,
}

impl CrParams {
    /// Defaults for everything except the three physical numbers, periodic boundaries.
    pub fn new(c_r: f64, c: f64, omega: f64) -> Self {
        Self {
            c_r,
            c,
            gamma_c: 4.0 / 3.0,
            alpha_nu: 3.0 * std::f64::consts::PI / 16.0,
            omega,
            wave_floor: 1e-10,
            alfven_density: AlfvenDensity::Total,
            limiter: Limiter::VanLeer,
            asymptotic_preserving: false,
            work_form: WorkForm::Scattering,
            model: TransportModel::SelfConfined,
            boundaries: CrBoundaryPair {
                left: CrBoundary::Periodic,
                right: CrBoundary::Periodic,
            },
            tolerances: ExchangeTolerances::default(),
            cfl: 0.8,
            max_subcycles: 100_000,
            coupling: Coupling::InTransport,
        }
    }

    /// Checks every value; the error names the parameter, its value and the allowed range.
    pub fn validate(&self) -> Result<(), CrError> {
        fn bad(
            key: &'static str,
            value: impl std::fmt::Display,
            allowed: &'static str,
        ) -> Result<(), CrError> {
            Err(CrError::InvalidParameter {
                key,
                value: value.to_string(),
                allowed,
            })
        }
        let pos = |x: f64| x.is_finite() && x > 0.0;
        if !pos(self.c_r) {
            return bad("c_r", self.c_r, "a finite number > 0");
        }
        if !(self.c.is_finite() && self.c >= self.c_r) {
            return bad("c", self.c, "a finite number >= c_r");
        }
        if !(self.gamma_c > 1.0 && self.gamma_c <= 2.0) {
            return bad("gamma_c", self.gamma_c, "1 < gamma_c <= 2");
        }
        if !pos(self.alpha_nu) {
            return bad("alpha_nu", self.alpha_nu, "a finite number > 0");
        }
        if !pos(self.omega) {
            return bad(
                "omega",
                self.omega,
                "a finite number > 0 (gyro-frequency, code units)",
            );
        }
        if !(pos(self.wave_floor) && self.wave_floor < 1.0) {
            return bad(
                "wave_floor",
                self.wave_floor,
                "0 < wave_floor < 1 (fraction of e_B)",
            );
        }
        if !(self.cfl > 0.0 && self.cfl <= 1.0) {
            return bad("cfl", self.cfl, "0 < cfl <= 1");
        }
        if self.max_subcycles == 0 {
            return bad("max_subcycles", self.max_subcycles, "at least 1");
        }
        let t = &self.tolerances;
        if !(pos(t.tol_c) && t.tol_c < 1.0) {
            return bad("tol_c", t.tol_c, "0 < tol_c < 1");
        }
        if !pos(t.tol_a) {
            return bad("tol_a", t.tol_a, "a finite number > 0");
        }
        if t.max_halvings > 40 {
            return bad("max_halvings", t.max_halvings, "0..=40");
        }
        if t.max_substeps == 0 {
            return bad("max_substeps", t.max_substeps, "at least 1");
        }
        match self.model {
            TransportModel::SelfConfined => {}
            TransportModel::FixedKappa { kappa } => {
                if !pos(kappa) {
                    return bad("kappa", kappa, "a finite number > 0");
                }
            }
            TransportModel::Streaming {
                kappa,
                kappa_decoupled,
            } => {
                if !pos(kappa) {
                    return bad("kappa", kappa, "a finite number > 0");
                }
                if kappa_decoupled.is_nan() || kappa_decoupled <= 0.0 {
                    return bad(
                        "kappa_decoupled",
                        kappa_decoupled,
                        "a number > 0 (infinity = no scattering)",
                    );
                }
            }
        }
        for (key, b) in [
            ("boundary_left", self.boundaries.left),
            ("boundary_right", self.boundaries.right),
        ] {
            match b {
                CrBoundary::FixedFlux(x) if !x.is_finite() => {
                    return bad(key, x, "a finite CR energy flux")
                }
                CrBoundary::FixedEnergyDensity(x) if !(x.is_finite() && x >= 0.0) => {
                    return bad(key, x, "a finite CR energy density >= 0")
                }
                _ => {}
            }
        }
        let lp = matches!(self.boundaries.left, CrBoundary::Periodic);
        let rp = matches!(self.boundaries.right, CrBoundary::Periodic);
        if lp != rp {
            return bad(
                "boundaries",
                format!("{:?} / {:?}", self.boundaries.left, self.boundaries.right),
                "periodic on both sides or on neither",
            );
        }
        Ok(())
    }
}
