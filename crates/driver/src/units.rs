//! Conversion between cgs (decks, snapshots) and code units (the solvers).
//!
//! Three scales define the code units: a length L (cm), a density ρ₀ (g/cm³) and a velocity
//! v₀ (cm/s). Derived: time L/v₀ (s), pressure and energy density ρ₀v₀² (erg/cm³), energy per
//! unit area ρ₀v₀²L (erg/cm²), mass per unit area ρ₀L (g/cm²). The MHD crate stores the field
//! in Heaviside–Lorentz form b̃ = B/√(4π), so one code field unit is √(4π ρ₀ v₀²) gauss and
//! the magnetic pressure is b̃²/2 = B²/(8π) (common practice).

use crate::deck::UnitsSection;

/// Boltzmann constant k_B, erg/K (exact by the 2019 SI definition; CODATA 2018).
pub const K_BOLTZMANN: f64 = 1.380_649e-16;
/// Atomic mass unit, g (CODATA 2018: 1.660 539 066 60(50) × 10⁻²⁷ kg).
pub const ATOMIC_MASS_UNIT: f64 = 1.660_539_066_60e-24;

/// Code-unit scales and conversions. All `*_to_code` take cgs values.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Units {
    /// One code length, cm.
    pub length: f64,
    /// One code density, g/cm³.
    pub density: f64,
    /// One code velocity, cm/s.
    pub velocity: f64,
}

impl Default for Units {
    fn default() -> Self {
        Self {
            length: 1.0,
            density: 1.0,
            velocity: 1.0,
        }
    }
}

impl From<&UnitsSection> for Units {
    fn from(u: &UnitsSection) -> Self {
        Self {
            length: u.length,
            density: u.density,
            velocity: u.velocity,
        }
    }
}

impl Units {
    /// One code time, s.
    pub fn time(&self) -> f64 {
        self.length / self.velocity
    }
    /// One code pressure (energy density), erg/cm³.
    pub fn pressure(&self) -> f64 {
        self.density * self.velocity * self.velocity
    }
    /// One code energy per unit area, erg/cm².
    pub fn energy_per_area(&self) -> f64 {
        self.pressure() * self.length
    }
    /// One code mass per unit area, g/cm².
    pub fn mass_per_area(&self) -> f64 {
        self.density * self.length
    }
    /// Gauss per code (Heaviside–Lorentz) field unit: √(4π ρ₀ v₀²).
    pub fn gauss_per_code_field(&self) -> f64 {
        (4.0 * std::f64::consts::PI * self.pressure()).sqrt()
    }
    /// B in gauss → b̃ in code units.
    pub fn field_to_code(&self, gauss: f64) -> f64 {
        gauss / self.gauss_per_code_field()
    }
    /// b̃ in code units → B in gauss.
    pub fn field_to_gauss(&self, code: f64) -> f64 {
        code * self.gauss_per_code_field()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn magnetic_pressure_is_b_squared_over_8_pi() {
        // A 1 μG field has B²/(8π) = 3.979e-14 erg/cm³ (definition of the Gaussian field energy).
        let u = Units {
            length: 3.085_677_581e18,
            density: 1.67e-24,
            velocity: 1e5,
        };
        let b = u.field_to_code(1e-6);
        let p_mag_cgs = 0.5 * b * b * u.pressure();
        let expected = 1e-12 / (8.0 * std::f64::consts::PI);
        assert!(
            (p_mag_cgs / expected - 1.0).abs() < 1e-13,
            "{p_mag_cgs} vs {expected}"
        );
        assert!((u.field_to_gauss(b) / 1e-6 - 1.0).abs() < 1e-14);
    }

    #[test]
    fn derived_scales() {
        let u = Units {
            length: 2.0,
            density: 3.0,
            velocity: 5.0,
        };
        assert_eq!(u.time(), 0.4);
        assert_eq!(u.pressure(), 75.0);
        assert_eq!(u.energy_per_area(), 150.0);
        assert_eq!(u.mass_per_area(), 6.0);
    }
}
