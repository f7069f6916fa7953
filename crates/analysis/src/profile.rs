//! One-dimensional profiles: coordinates plus named fields.

use crate::error::{AnalysisError, Result};
use serde::{Deserialize, Serialize};

/// What the values of a profile represent.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Sampling {
    /// Each value is the average of the field over its cell (finite-volume data, e.g. Sluice
    /// snapshots or a 3D code's cell data along a line of cells).
    CellAverage,
    /// Each value is the field at the coordinate (e.g. a line-out interpolated at points).
    PointSample,
}

impl Sampling {
    /// Parses `cell` / `cell_average` or `point` / `point_sample`.
    pub fn parse(value: &str) -> Result<Self> {
        match value.trim().to_ascii_lowercase().as_str() {
            "cell" | "cell_average" | "cell-average" => Ok(Sampling::CellAverage),
            "point" | "point_sample" | "point-sample" => Ok(Sampling::PointSample),
            _ => Err(AnalysisError::InvalidOption {
                key: "sampling".into(),
                value: value.into(),
                allowed: "`cell_average` (alias `cell`) or `point_sample` (alias `point`)".into(),
            }),
        }
    }
}

/// A named field of a profile.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Field {
    /// Field name (e.g. `density`, `cr_energy_density`).
    pub name: String,
    /// Values, one per coordinate, in the units of the export (this crate does no unit
    /// conversion: both profiles must use the same units).
    pub values: Vec<f64>,
}

/// A 1D profile: strictly increasing coordinates (cell centres or sample points), optional cell
/// edges, and named fields of the same length.
///
/// Invariants (checked by every constructor): at least one coordinate; all numbers finite;
/// coordinates strictly increasing; edges, when given, number `len() + 1`, are strictly
/// increasing and enclose their centres; every field has `len()` values; field names are
/// unique and non-empty.
#[derive(Debug, Clone, PartialEq)]
pub struct Profile {
    source: String,
    sampling: Sampling,
    centres: Vec<f64>,
    edges: Option<Vec<f64>>,
    fields: Vec<Field>,
}

/// Relative tolerance on the spacing under which cell centres count as a uniform grid.
pub const UNIFORM_SPACING_TOLERANCE: f64 = 1e-6;

fn first_non_finite(values: &[f64]) -> Option<(usize, f64)> {
    values
        .iter()
        .copied()
        .enumerate()
        .find(|(_, v)| !v.is_finite())
}

impl Profile {
    /// Creates a profile without fields. `source` names it in error messages (usually the
    /// file path); `centres` are cell centres or sample points (any length unit, the same as
    /// the other profile); `edges` are optional cell faces (`centres.len() + 1` values).
    pub fn new(
        source: impl Into<String>,
        sampling: Sampling,
        centres: Vec<f64>,
        edges: Option<Vec<f64>>,
    ) -> Result<Self> {
        let source = source.into();
        let err = |message: String| AnalysisError::Profile {
            file: source.clone(),
            message,
        };
        if centres.is_empty() {
            return Err(err(
                "no coordinates: a profile needs at least one point".into()
            ));
        }
        if let Some((i, v)) = first_non_finite(&centres) {
            return Err(err(format!(
                "coordinate {i} is {v}: coordinates must be finite numbers"
            )));
        }
        for (i, w) in centres.windows(2).enumerate() {
            if w[1] == w[0] {
                return Err(err(format!(
                    "duplicate coordinate x = {} at indices {} and {}: coordinates must be \
                     strictly increasing",
                    w[0],
                    i,
                    i + 1
                )));
            }
            if w[1] < w[0] {
                return Err(err(format!(
                    "coordinate x = {} at index {} is below x = {} at index {}: coordinates \
                     must be strictly increasing",
                    w[1],
                    i + 1,
                    w[0],
                    i
                )));
            }
        }
        if let Some(e) = &edges {
            if e.len() != centres.len() + 1 {
                return Err(err(format!(
                    "{} cell edges for {} cells: expected {} (one more than the cells)",
                    e.len(),
                    centres.len(),
                    centres.len() + 1
                )));
            }
            if let Some((i, v)) = first_non_finite(e) {
                return Err(err(format!(
                    "cell edge {i} is {v}: edges must be finite numbers"
                )));
            }
            for (i, c) in centres.iter().enumerate() {
                if !(e[i] < *c && *c < e[i + 1]) {
                    return Err(err(format!(
                        "cell {i}: centre x = {c} is not strictly inside its edges [{}, {}]",
                        e[i],
                        e[i + 1]
                    )));
                }
            }
        }
        Ok(Profile {
            source,
            sampling,
            centres,
            edges,
            fields: Vec::new(),
        })
    }

    /// A uniform grid of `n` cells on `[lo, hi]` (centres and edges), without fields.
    pub fn uniform(
        source: impl Into<String>,
        sampling: Sampling,
        lo: f64,
        hi: f64,
        n: usize,
    ) -> Result<Self> {
        let source = source.into();
        if n == 0 || !(lo.is_finite() && hi.is_finite() && lo < hi) {
            return Err(AnalysisError::InvalidOption {
                key: "uniform grid".into(),
                value: format!("n = {n} on [{lo}, {hi}]"),
                allowed: "n >= 1 and finite lo < hi".into(),
            });
        }
        let dx = (hi - lo) / n as f64;
        let edges: Vec<f64> = (0..=n)
            .map(|i| if i == n { hi } else { lo + i as f64 * dx })
            .collect();
        let centres = edges.windows(2).map(|w| 0.5 * (w[0] + w[1])).collect();
        Profile::new(source, sampling, centres, Some(edges))
    }

    /// Adds a field; errors on a wrong length, a non-finite value or a duplicate name.
    pub fn add_field(&mut self, name: impl Into<String>, values: Vec<f64>) -> Result<()> {
        let name = name.into();
        let err = |message: String| AnalysisError::Profile {
            file: self.source.clone(),
            message,
        };
        if name.trim().is_empty() {
            return Err(err("empty field name".into()));
        }
        if self.fields.iter().any(|f| f.name == name) {
            return Err(err(format!(
                "field `{name}` given twice: names must be unique"
            )));
        }
        if values.len() != self.centres.len() {
            return Err(err(format!(
                "field `{name}` has {} values for {} coordinates: lengths must match",
                values.len(),
                self.centres.len()
            )));
        }
        if let Some((i, v)) = first_non_finite(&values) {
            return Err(err(format!(
                "field `{name}` value {i} (x = {}) is {v}: values must be finite numbers",
                self.centres[i]
            )));
        }
        self.fields.push(Field { name, values });
        Ok(())
    }

    /// Builder form of [`Profile::add_field`].
    pub fn with_field(mut self, name: impl Into<String>, values: Vec<f64>) -> Result<Self> {
        self.add_field(name, values)?;
        Ok(self)
    }

    /// Name of the profile's source (file path) used in messages.
    pub fn source(&self) -> &str {
        &self.source
    }

    /// Whether the values are cell averages or point samples.
    pub fn sampling(&self) -> Sampling {
        self.sampling
    }

    /// Number of cells / points.
    pub fn len(&self) -> usize {
        self.centres.len()
    }

    /// Always false (a profile has at least one point); present for API symmetry.
    pub fn is_empty(&self) -> bool {
        self.centres.is_empty()
    }

    /// Cell centres or sample coordinates.
    pub fn centres(&self) -> &[f64] {
        &self.centres
    }

    /// Cell edges as given (not derived), if any.
    pub fn edges(&self) -> Option<&[f64]> {
        self.edges.as_deref()
    }

    /// All fields in insertion order.
    pub fn fields(&self) -> &[Field] {
        &self.fields
    }

    /// Names of all fields in insertion order.
    pub fn field_names(&self) -> Vec<&str> {
        self.fields.iter().map(|f| f.name.as_str()).collect()
    }

    /// Values of a field, if present.
    pub fn field(&self, name: &str) -> Option<&[f64]> {
        self.fields
            .iter()
            .find(|f| f.name == name)
            .map(|f| f.values.as_slice())
    }

    /// Values of a field, or an error listing the available fields.
    pub fn require_field(&self, name: &str) -> Result<&[f64]> {
        self.field(name).ok_or_else(|| AnalysisError::MissingField {
            file: self.source.clone(),
            field: name.into(),
            available: if self.fields.is_empty() {
                "(none)".into()
            } else {
                self.field_names().join(", ")
            },
        })
    }

    /// Cell edges: the given ones, or derived from the centres.
    ///
    /// Derivation: faces midway between neighbouring centres, the outer faces half a spacing
    /// beyond the outer centres. For cell averages this is only unambiguous on a uniform grid,
    /// so cell-average profiles without edges must have uniform spacing (relative tolerance
    /// [`UNIFORM_SPACING_TOLERANCE`]); for point samples the result is the set of nearest-point
    /// (Voronoi) cells. A single cell without edges has no width and is an error.
    pub fn cell_edges(&self) -> Result<Vec<f64>> {
        if let Some(e) = &self.edges {
            return Ok(e.clone());
        }
        let x = &self.centres;
        if x.len() < 2 {
            return Err(AnalysisError::Profile {
                file: self.source.clone(),
                message: "a single cell without edges has no width: give the cell edges \
                          (lower/upper edge columns)"
                    .into(),
            });
        }
        if self.sampling == Sampling::CellAverage {
            self.check_uniform()?;
        }
        let n = x.len();
        let mut e = Vec::with_capacity(n + 1);
        e.push(x[0] - 0.5 * (x[1] - x[0]));
        e.extend(x.windows(2).map(|w| 0.5 * (w[0] + w[1])));
        e.push(x[n - 1] + 0.5 * (x[n - 1] - x[n - 2]));
        Ok(e)
    }

    fn check_uniform(&self) -> Result<()> {
        let x = &self.centres;
        let n = x.len();
        let mean = (x[n - 1] - x[0]) / (n - 1) as f64;
        for w in x.windows(2) {
            let d = w[1] - w[0];
            if ((d - mean) / mean).abs() > UNIFORM_SPACING_TOLERANCE {
                return Err(AnalysisError::Profile {
                    file: self.source.clone(),
                    message: format!(
                        "cell averages on a non-uniform grid without cell edges: spacing {d} \
                         between x = {} and x = {} differs from the mean spacing {mean} by more \
                         than {UNIFORM_SPACING_TOLERANCE:e} (relative); give the cell edges \
                         (lower/upper edge columns), or read the data as point samples",
                        w[0], w[1]
                    ),
                });
            }
        }
        Ok(())
    }

    /// Quadrature weights (length units) used by the error norms: the cell widths for cell
    /// averages or when edges are given; the trapezoid-rule weights (half spacing at each end)
    /// for point samples without edges; `[1.0]` for a single point or cell without edges.
    pub fn weights(&self) -> Result<Vec<f64>> {
        let x = &self.centres;
        let n = x.len();
        if self.edges.is_none() && n == 1 {
            return Ok(vec![1.0]);
        }
        if self.edges.is_some() || self.sampling == Sampling::CellAverage {
            let e = self.cell_edges()?;
            return Ok(e.windows(2).map(|w| w[1] - w[0]).collect());
        }
        let mut w = vec![0.0; n];
        for (i, pair) in x.windows(2).enumerate() {
            let half = 0.5 * (pair[1] - pair[0]);
            w[i] += half;
            w[i + 1] += half;
        }
        Ok(w)
    }

    /// The range a comparison can cover: `[first edge, last edge]` for cell averages (given or
    /// derived edges), `[first point, last point]` for point samples.
    pub fn data_range(&self) -> Result<(f64, f64)> {
        match self.sampling {
            Sampling::PointSample => Ok((self.centres[0], self.centres[self.len() - 1])),
            Sampling::CellAverage => {
                let e = self.cell_edges()?;
                Ok((e[0], e[e.len() - 1]))
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn uniform_grid_has_exact_end_edges_and_midpoint_centres() {
        let p = Profile::uniform("u", Sampling::CellAverage, 0.0, 1.0, 4).unwrap();
        assert_eq!(p.edges().unwrap(), &[0.0, 0.25, 0.5, 0.75, 1.0]);
        assert_eq!(p.centres(), &[0.125, 0.375, 0.625, 0.875]);
        assert_eq!(p.weights().unwrap(), vec![0.25; 4]);
    }

    #[test]
    fn derived_edges_of_uniform_centres() {
        let p = Profile::new("c", Sampling::CellAverage, vec![0.5, 1.5, 2.5], None).unwrap();
        assert_eq!(p.cell_edges().unwrap(), vec![0.0, 1.0, 2.0, 3.0]);
    }

    #[test]
    fn non_uniform_cell_centres_without_edges_are_rejected() {
        let p = Profile::new("nu.csv", Sampling::CellAverage, vec![0.0, 1.0, 3.0], None).unwrap();
        let e = p.cell_edges().unwrap_err().to_string();
        assert!(
            e.starts_with("nu.csv: cell averages on a non-uniform grid"),
            "{e}"
        );
        assert!(e.contains("spacing 1 between x = 0 and x = 1 differs from the mean spacing 1.5 by more than 1e-6"), "{e}");
        // The same coordinates as point samples get Voronoi cells and trapezoid weights.
        let p = Profile::new("nu.csv", Sampling::PointSample, vec![0.0, 1.0, 3.0], None).unwrap();
        assert_eq!(p.cell_edges().unwrap(), vec![-0.5, 0.5, 2.0, 4.0]);
        assert_eq!(p.weights().unwrap(), vec![0.5, 1.5, 1.0]);
    }

    #[test]
    fn single_cell_edge_cases() {
        let p = Profile::new("one", Sampling::CellAverage, vec![0.5], None).unwrap();
        assert_eq!(p.weights().unwrap(), vec![1.0]);
        let e = p.cell_edges().unwrap_err().to_string();
        assert!(e.contains("single cell without edges"), "{e}");
        let p = Profile::new(
            "one",
            Sampling::CellAverage,
            vec![0.5],
            Some(vec![0.0, 2.0]),
        )
        .unwrap();
        assert_eq!(p.weights().unwrap(), vec![2.0]);
        assert_eq!(p.data_range().unwrap(), (0.0, 2.0));
    }

    #[test]
    fn invalid_profiles_are_rejected_with_the_reason() {
        let msg = |r: Result<Profile>| r.unwrap_err().to_string();
        assert!(
            msg(Profile::new("p", Sampling::PointSample, vec![], None)).contains("at least one")
        );
        assert!(msg(Profile::new(
            "p",
            Sampling::PointSample,
            vec![0.0, 0.0],
            None
        ))
        .contains("duplicate coordinate x = 0 at indices 0 and 1"));
        assert!(msg(Profile::new(
            "p",
            Sampling::PointSample,
            vec![1.0, 0.0],
            None
        ))
        .contains("x = 0 at index 1 is below x = 1 at index 0"));
        assert!(msg(Profile::new(
            "p",
            Sampling::PointSample,
            vec![0.0, f64::NAN],
            None
        ))
        .contains("coordinate 1 is NaN"));
        assert!(msg(Profile::new(
            "p",
            Sampling::CellAverage,
            vec![0.5],
            Some(vec![0.0])
        ))
        .contains("1 cell edges for 1 cells: expected 2"));
        assert!(msg(Profile::new(
            "p",
            Sampling::CellAverage,
            vec![1.5],
            Some(vec![0.0, 1.0])
        ))
        .contains("not strictly inside"));
        let p = Profile::uniform("p", Sampling::CellAverage, 0.0, 1.0, 2).unwrap();
        assert!(p
            .clone()
            .with_field("rho", vec![1.0])
            .unwrap_err()
            .to_string()
            .contains("field `rho` has 1 values for 2 coordinates"));
        assert!(p
            .clone()
            .with_field("rho", vec![1.0, f64::INFINITY])
            .unwrap_err()
            .to_string()
            .contains("value 1 (x = 0.75) is inf"));
        let q = p.with_field("rho", vec![1.0, 2.0]).unwrap();
        assert!(q
            .clone()
            .with_field("rho", vec![1.0, 2.0])
            .unwrap_err()
            .to_string()
            .contains("given twice"));
        let e = q.require_field("pressure").unwrap_err().to_string();
        assert_eq!(e, "p: no field `pressure`; available fields: rho");
    }

    #[test]
    fn sampling_parse() {
        assert_eq!(Sampling::parse("cell").unwrap(), Sampling::CellAverage);
        assert_eq!(
            Sampling::parse("Point_Sample").unwrap(),
            Sampling::PointSample
        );
        let e = Sampling::parse("nodal").unwrap_err().to_string();
        assert!(e.starts_with("invalid `sampling` = `nodal`"), "{e}");
    }
}
