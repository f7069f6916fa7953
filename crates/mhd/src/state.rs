//! Conserved state (structure of arrays) and primitive conversions.

use crate::config::Eos;
use crate::grid::Grid;
use ndarray::Array1;

/// Primitive state of one cell: ρ, v (x, y, z), gas pressure p, transverse b̃ (y, z).
/// b̃ = B/√(4π) (Heaviside–Lorentz). For an isothermal gas `p` is ignored on input and
/// reported as c_s² ρ on output.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Primitive {
    /// Mass density.
    pub rho: f64,
    /// Velocity x.
    pub vx: f64,
    /// Velocity y.
    pub vy: f64,
    /// Velocity z.
    pub vz: f64,
    /// Gas pressure.
    pub p: f64,
    /// Transverse field y (Heaviside–Lorentz).
    pub by: f64,
    /// Transverse field z (Heaviside–Lorentz).
    pub bz: f64,
}

/// Conserved MHD state on a grid, ghost cells included. All arrays have length `grid.len()`.
#[derive(Debug, Clone, PartialEq)]
pub struct State {
    /// The grid.
    pub grid: Grid,
    /// Constant normal field b̃_x (Heaviside–Lorentz).
    pub bx: f64,
    /// Mass density ρ.
    pub rho: Array1<f64>,
    /// Momentum density ρv_x.
    pub mx: Array1<f64>,
    /// Momentum density ρv_y.
    pub my: Array1<f64>,
    /// Momentum density ρv_z.
    pub mz: Array1<f64>,
    /// Total energy density E = p/(γ−1) + ρv²/2 + |b̃|²/2 (unused for an isothermal gas).
    pub en: Array1<f64>,
    /// Transverse field b̃_y.
    pub by: Array1<f64>,
    /// Transverse field b̃_z.
    pub bz: Array1<f64>,
}

impl State {
    /// A zeroed state (ρ = 0 everywhere); fill it with [`State::set_primitive`].
    pub fn zeros(grid: Grid, bx: f64) -> Self {
        let n = grid.len();
        Self {
            grid,
            bx,
            rho: Array1::zeros(n),
            mx: Array1::zeros(n),
            my: Array1::zeros(n),
            mz: Array1::zeros(n),
            en: Array1::zeros(n),
            by: Array1::zeros(n),
            bz: Array1::zeros(n),
        }
    }

    /// Sets storage cell `j` from a primitive state.
    pub fn set_primitive(&mut self, j: usize, w: &Primitive, eos: &Eos) {
        self.rho[j] = w.rho;
        self.mx[j] = w.rho * w.vx;
        self.my[j] = w.rho * w.vy;
        self.mz[j] = w.rho * w.vz;
        self.by[j] = w.by;
        self.bz[j] = w.bz;
        let kin = 0.5 * w.rho * (w.vx * w.vx + w.vy * w.vy + w.vz * w.vz);
        let mag = 0.5 * (self.bx * self.bx + w.by * w.by + w.bz * w.bz);
        self.en[j] = match *eos {
            Eos::Ideal { gamma } => w.p / (gamma - 1.0) + kin + mag,
            Eos::Isothermal { .. } => kin + mag,
        };
    }

    /// Primitive state of storage cell `j` (no floors applied).
    pub fn primitive(&self, j: usize, eos: &Eos) -> Primitive {
        let rho = self.rho[j];
        let vx = self.mx[j] / rho;
        let vy = self.my[j] / rho;
        let vz = self.mz[j] / rho;
        let by = self.by[j];
        let bz = self.bz[j];
        let p = match *eos {
            Eos::Ideal { gamma } => {
                let kin = 0.5 * rho * (vx * vx + vy * vy + vz * vz);
                let mag = 0.5 * (self.bx * self.bx + by * by + bz * bz);
                (gamma - 1.0) * (self.en[j] - kin - mag)
            }
            Eos::Isothermal { cs } => cs * cs * rho,
        };
        Primitive {
            rho,
            vx,
            vy,
            vz,
            p,
            by,
            bz,
        }
    }

    /// Sum over interior cells of each conserved variable times Δx, in the order
    /// (ρ, ρv_x, ρv_y, ρv_z, E, b̃_y, b̃_z).
    pub fn totals(&self) -> [f64; 7] {
        let dx = self.grid.dx();
        let r = self.grid.interior();
        let s = |a: &Array1<f64>| a.slice(ndarray::s![r.clone()]).sum() * dx;
        [
            s(&self.rho),
            s(&self.mx),
            s(&self.my),
            s(&self.mz),
            s(&self.en),
            s(&self.by),
            s(&self.bz),
        ]
    }
}
