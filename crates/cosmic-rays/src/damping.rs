//! Wave damping interface (the driver adapts the cgs damping laws to it).

use sluice_mhd::State;

/// Direction of a wave relative to the magnetic field b = sign(B_x) x̂.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum WaveDirection {
    /// Forward, along b (energy e_+).
    Forward,
    /// Backward, against b (energy e_−).
    Backward,
}

/// Damping of the wave energy ε in storage cell `j`: dε/dt = −a_d ε − b ε² (code units).
///
/// `rates` returns `(a_d, b)`: the linear energy damping rate a_d [1/time] (= 2Γ for an
/// amplitude rate Γ) and the quadratic coefficient b [1/(energy density · time)]. Both must be
/// finite and ≥ 0. The heat dε lost goes into the gas energy.
pub trait WaveDamping {
    /// Damping coefficients for cell `j` (storage index), current gas, wave energy and direction.
    fn rates(&self, j: usize, gas: &State, e_wave: f64, dir: WaveDirection) -> (f64, f64);
}

/// No damping.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct NoDamping;

impl WaveDamping for NoDamping {
    #[inline]
    fn rates(&self, _j: usize, _gas: &State, _e: f64, _dir: WaveDirection) -> (f64, f64) {
        (0.0, 0.0)
    }
}

/// Constant amplitude damping rate Γ [1/time]: a_d = 2Γ, b = 0 (physics-detail §3.4 Γ_0).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ConstantDamping(pub f64);

impl WaveDamping for ConstantDamping {
    #[inline]
    fn rates(&self, _j: usize, _gas: &State, _e: f64, _dir: WaveDirection) -> (f64, f64) {
        (2.0 * self.0, 0.0)
    }
}

/// Quadratic damping dε/dt = −b ε² with constant b (stands in for non-linear Landau damping in
/// tests).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct QuadraticDamping(pub f64);

impl WaveDamping for QuadraticDamping {
    #[inline]
    fn rates(&self, _j: usize, _gas: &State, _e: f64, _dir: WaveDirection) -> (f64, f64) {
        (0.0, self.0)
    }
}
