//! Uniform 1D grid with ghost cells.

use crate::MhdError;

/// A uniform grid of `n` interior cells on `[x_min, x_max]` with `ng` ghost cells per side.
///
/// Storage index `j` runs over `0..n + 2 ng`; interior cells are `ng..ng + n`. Cell `j` has
/// centre `x_min + (j - ng + 1/2) Δx`. Coordinates are in code length units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Grid {
    /// Number of interior cells.
    pub n: usize,
    /// Number of ghost cells on each side.
    pub ng: usize,
    /// Left edge of the domain.
    pub x_min: f64,
    /// Right edge of the domain.
    pub x_max: f64,
}

impl Grid {
    /// Ghost cells needed by every reconstruction this crate offers.
    pub const GHOSTS: usize = 2;

    /// Creates a grid; errors if `n == 0` or the interval is empty or not finite.
    pub fn new(n: usize, x_min: f64, x_max: f64) -> Result<Self, MhdError> {
        if n == 0 {
            return Err(MhdError::InvalidConfig {
                key: "n",
                value: n.to_string(),
                allowed: "at least 1 cell",
            });
        }
        if !(x_min.is_finite() && x_max.is_finite() && x_max > x_min) {
            return Err(MhdError::InvalidConfig {
                key: "x_max",
                value: format!("[{x_min}, {x_max}]"),
                allowed: "finite bounds with x_max > x_min",
            });
        }
        Ok(Self {
            n,
            ng: Self::GHOSTS,
            x_min,
            x_max,
        })
    }

    /// Cell width Δx.
    #[inline]
    pub fn dx(&self) -> f64 {
        (self.x_max - self.x_min) / self.n as f64
    }

    /// Total number of stored cells, ghosts included.
    #[inline]
    pub fn len(&self) -> usize {
        self.n + 2 * self.ng
    }

    /// Always false: a grid has at least one cell.
    #[inline]
    pub fn is_empty(&self) -> bool {
        false
    }

    /// Range of storage indices of the interior cells.
    #[inline]
    pub fn interior(&self) -> std::ops::Range<usize> {
        self.ng..self.ng + self.n
    }

    /// Centre of storage cell `j` (ghosts have centres outside the domain).
    #[inline]
    pub fn x_center(&self, j: usize) -> f64 {
        self.x_min + ((j as f64 - self.ng as f64) + 0.5) * self.dx()
    }

    /// Centres of the interior cells.
    pub fn centers(&self) -> Vec<f64> {
        self.interior().map(|j| self.x_center(j)).collect()
    }

    /// The `n + 1` face coordinates of the interior cells.
    pub fn faces(&self) -> Vec<f64> {
        (0..=self.n)
            .map(|i| self.x_min + i as f64 * self.dx())
            .collect()
    }
}
