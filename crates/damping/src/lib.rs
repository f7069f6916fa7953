//! `sluice-damping`: small pure source-term physics in cgs for Sluice.
//!
//! * [`waves`] — amplitude damping rates Γ [s⁻¹] of the forward/backward Alfvén-wave energies
//!   and their energy form Q = f_E Γ e (ion–neutral, nonlinear Landau, turbulent, constant),
//!   combined in [`DampingModel::rates`] as `linear` [s⁻¹] and `quadratic` [cm³ erg⁻¹ s⁻¹].
//! * [`ionisation`] — hydrogen collisional-ionisation equilibrium (Cen 1992; Hui & Gnedin 1997),
//!   mean molecular weight, ion density for the ion Alfvén speed.
//! * [`cooling`] — Koyama & Inutsuka (2002) and piecewise power-law cooling functions, the exact
//!   integrator of Townsend (2009) and a safeguarded implicit update with heating.
//!
//! No grid, no state, no I/O: the driver calls these per cell and converts units.
//! Formulas, defaults and what is from memory: `docs/damping.md`.

pub mod constants;
pub mod cooling;
pub mod error;
pub mod ionisation;
pub mod waves;

pub use cooling::{
    CoolingIntegrator, CoolingStep, DensityPrefactor, Ki02, Ki02Cooler, PowerLawSegment,
    PowerLawTable, TownsendCooler,
};
pub use error::DampingError;
pub use ionisation::{alfven_speed, Cen1992, CieFit, Composition, HuiGnedin1997, Ionisation};
pub use waves::{
    CharacteristicCr, DampingModel, DampingRates, IonNeutral, LocalConditions, Nll, RateBreakdown,
    TurbulenceAmplitude, Turbulent, TurbulentRegime,
};
