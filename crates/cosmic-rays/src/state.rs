//! CR state on the gas grid (structure of arrays, ghost cells included).

use ndarray::Array1;
use sluice_mhd::Grid;

/// CR and wave variables per storage cell (length `grid.len()`, ghosts included), code units.
///
/// Wave energies are labelled by the field direction as in TP19: `e_plus` propagates along
/// b = sign(B_x) x̂, `e_minus` against it.
#[derive(Debug, Clone, PartialEq)]
pub struct CrState {
    /// CR energy density e_c.
    pub e_c: Array1<f64>,
    /// x-component of the comoving CR energy flux, F = s f (s = sign B_x) [energy/(area·time)].
    pub f: Array1<f64>,
    /// Energy density of forward (along b) Alfvén waves e_+.
    pub e_plus: Array1<f64>,
    /// Energy density of backward Alfvén waves e_−.
    pub e_minus: Array1<f64>,
}

impl CrState {
    /// All zero on `grid`.
    pub fn zeros(grid: &Grid) -> Self {
        let n = grid.len();
        Self {
            e_c: Array1::zeros(n),
            f: Array1::zeros(n),
            e_plus: Array1::zeros(n),
            e_minus: Array1::zeros(n),
        }
    }

    /// Number of storage cells.
    pub fn len(&self) -> usize {
        self.e_c.len()
    }

    /// True if there are no cells.
    pub fn is_empty(&self) -> bool {
        self.e_c.is_empty()
    }

    /// Interior sums times Δx: (∫e_c, ∫F, ∫e_+, ∫e_−).
    pub fn totals(&self, grid: &Grid) -> [f64; 4] {
        let r = grid.interior();
        let dx = grid.dx();
        let s = |a: &Array1<f64>| {
            a.as_slice()
                .map(|x| x[r.clone()].iter().sum::<f64>())
                .unwrap_or(0.0)
                * dx
        };
        [s(&self.e_c), s(&self.f), s(&self.e_plus), s(&self.e_minus)]
    }
}
