//! Error norms, tolerances and the compare verdict.
//!
//! Norms of a difference `e_i` over the compared reference cells `i ∈ C` with quadrature
//! weights `w_i` (cell widths; trapezoid weights for point samples, see
//! [`Profile::weights`]), normalised by the compared length `W = Σ_{i∈C} w_i`:
//!
//! * `L1 = Σ w_i |e_i| / W`,
//! * `L2 = sqrt(Σ w_i e_i² / W)`,
//! * `L∞ = max |e_i|`.
//!
//! These are Δx-weighted means, so they carry the units of the field and do not grow with
//! the number of cells. The relative norm divides by the same norm of the reference values
//! over the same cells; it is undefined (reported as `null`) when that norm is zero.

use crate::error::{AnalysisError, Result};
use crate::profile::Profile;
use crate::remap::{remap, Coverage, RemapMethod};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::str::FromStr;

/// An error norm.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Norm {
    /// Weighted mean of |e|.
    L1,
    /// Weighted root-mean-square of e.
    L2,
    /// Maximum of |e|.
    Linf,
}

impl Norm {
    /// All norms in report order.
    pub const ALL: [Norm; 3] = [Norm::L1, Norm::L2, Norm::Linf];

    /// Name as spelled in options and reports (`l1`, `l2`, `linf`).
    pub fn name(self) -> &'static str {
        match self {
            Norm::L1 => "l1",
            Norm::L2 => "l2",
            Norm::Linf => "linf",
        }
    }

    /// Parses `l1`, `l2`, `linf` (also `inf`, `max`), case-insensitive.
    pub fn parse(value: &str) -> Result<Self> {
        match value.trim().to_ascii_lowercase().as_str() {
            "l1" => Ok(Norm::L1),
            "l2" => Ok(Norm::L2),
            "linf" | "inf" | "max" | "l_inf" => Ok(Norm::Linf),
            _ => Err(AnalysisError::InvalidOption {
                key: "norm".into(),
                value: value.into(),
                allowed: "`l1`, `l2` or `linf`".into(),
            }),
        }
    }
}

/// The three norms of one quantity.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct NormSet {
    /// L1 norm (weighted mean of |e|).
    pub l1: f64,
    /// L2 norm (weighted RMS).
    pub l2: f64,
    /// L∞ norm (max |e|).
    pub linf: f64,
}

impl NormSet {
    /// The value of one norm.
    pub fn get(&self, norm: Norm) -> f64 {
        match norm {
            Norm::L1 => self.l1,
            Norm::L2 => self.l2,
            Norm::Linf => self.linf,
        }
    }
}

/// Relative norms; `None` where the reference norm is zero.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct RelativeNormSet {
    /// L1 error / L1 of the reference.
    pub l1: Option<f64>,
    /// L2 error / L2 of the reference.
    pub l2: Option<f64>,
    /// L∞ error / L∞ of the reference.
    pub linf: Option<f64>,
}

impl RelativeNormSet {
    /// The value of one norm.
    pub fn get(&self, norm: Norm) -> Option<f64> {
        match norm {
            Norm::L1 => self.l1,
            Norm::L2 => self.l2,
            Norm::Linf => self.linf,
        }
    }
}

/// Weighted norms of `values` (see the module documentation). `weights` are positive; the
/// slices have the same length (extra entries of the longer one are ignored). An empty input
/// gives zeros.
pub fn norms(values: &[f64], weights: &[f64]) -> NormSet {
    let (mut s1, mut s2, mut mx, mut w) = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
    for (v, wi) in values.iter().zip(weights) {
        let a = v.abs();
        s1 += wi * a;
        s2 += wi * a * a;
        mx = mx.max(a);
        w += wi;
    }
    if w > 0.0 {
        NormSet {
            l1: s1 / w,
            l2: (s2 / w).sqrt(),
            linf: mx,
        }
    } else {
        NormSet {
            l1: 0.0,
            l2: 0.0,
            linf: mx,
        }
    }
}

fn ratio(e: f64, r: f64) -> Option<f64> {
    (r > 0.0).then_some(e / r)
}

/// Whether a tolerance bounds the absolute or the relative norm.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ToleranceKind {
    /// Bound on the norm divided by the reference's norm (dimensionless).
    Relative,
    /// Bound on the norm itself (units of the field).
    Absolute,
}

/// A pass/fail bound: `norm` of the (relative or absolute) error must be `<= value`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Tolerance {
    /// Upper bound (finite, >= 0).
    pub value: f64,
    /// Which norm it applies to.
    pub norm: Norm,
    /// Relative or absolute.
    pub kind: ToleranceKind,
}

impl Default for Tolerance {
    /// Relative L1 error at most 1e-2.
    fn default() -> Self {
        Tolerance {
            value: 1e-2,
            norm: Norm::L1,
            kind: ToleranceKind::Relative,
        }
    }
}

impl Tolerance {
    /// A relative-L1 tolerance (the default kind and norm).
    pub fn relative_l1(value: f64) -> Self {
        Tolerance {
            value,
            ..Tolerance::default()
        }
    }
}

impl FromStr for Tolerance {
    type Err = AnalysisError;

    /// Parses `VALUE` (relative L1), `NORM:VALUE` (relative), or `KIND:NORM:VALUE` with KIND
    /// `rel`/`relative` or `abs`/`absolute`: e.g. `1e-2`, `linf:5e-2`, `abs:l2:1e-6`.
    fn from_str(spec: &str) -> Result<Self> {
        let bad = |allowed: String| AnalysisError::InvalidOption {
            key: "tolerance".into(),
            value: spec.into(),
            allowed,
        };
        let parts: Vec<&str> = spec.split(':').map(str::trim).collect();
        let (kind, norm, value) = match parts.as_slice() {
            [v] => (None, None, *v),
            [n, v] => (None, Some(*n), *v),
            [k, n, v] => (Some(*k), Some(*n), *v),
            _ => {
                return Err(bad(
                    "VALUE, NORM:VALUE or KIND:NORM:VALUE (e.g. 1e-2, linf:5e-2, abs:l2:1e-6)"
                        .into(),
                ))
            }
        };
        let kind = match kind.map(str::to_ascii_lowercase).as_deref() {
            None | Some("rel") | Some("relative") => ToleranceKind::Relative,
            Some("abs") | Some("absolute") => ToleranceKind::Absolute,
            Some(k) => return Err(bad(format!("kind `rel` or `abs`, found `{k}`"))),
        };
        let norm = match norm {
            None => Norm::L1,
            Some(n) => Norm::parse(n)
                .map_err(|_| bad(format!("norm `l1`, `l2` or `linf`, found `{n}`")))?,
        };
        let value: f64 = value
            .parse()
            .ok()
            .filter(|v: &f64| v.is_finite() && *v >= 0.0)
            .ok_or_else(|| {
                bad(format!(
                    "a finite number >= 0 as the bound, found `{value}`"
                ))
            })?;
        Ok(Tolerance { value, norm, kind })
    }
}

impl std::fmt::Display for Tolerance {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let k = match self.kind {
            ToleranceKind::Relative => "rel",
            ToleranceKind::Absolute => "abs",
        };
        write!(f, "{k}:{}:{:e}", self.norm.name(), self.value)
    }
}

/// Parses per-field tolerances `density=1e-2,pressure=abs:linf:1e-4` (see
/// [`Tolerance::from_str`] for the value syntax).
pub fn parse_field_tolerances(spec: &str) -> Result<BTreeMap<String, Tolerance>> {
    let mut out = BTreeMap::new();
    for entry in spec.split(',').map(str::trim) {
        let Some((name, tol)) = entry.split_once('=') else {
            return Err(AnalysisError::InvalidOption {
                key: "field tolerances".into(),
                value: spec.into(),
                allowed: format!(
                    "FIELD=TOLERANCE entries separated by commas, e.g. \
                     density=1e-2,pressure=abs:linf:1e-4 (entry `{entry}` has no `=`)"
                ),
            });
        };
        let name = name.trim();
        if name.is_empty() || out.contains_key(name) {
            return Err(AnalysisError::InvalidOption {
                key: "field tolerances".into(),
                value: spec.into(),
                allowed: format!("each field named once and non-empty (entry `{entry}`)"),
            });
        }
        out.insert(name.to_string(), tol.parse()?);
    }
    Ok(out)
}

/// Parses one tolerance option that may mix a global bound and per-field bounds, e.g.
/// `1e-2`, `density=1e-2,velocity=abs:linf:1e3` or `linf:5e-2,velocity=abs:l1:10`: an entry
/// without `=` is the global tolerance (at most one), entries `FIELD=TOLERANCE` are per field.
pub fn parse_tolerances(spec: &str) -> Result<(Option<Tolerance>, BTreeMap<String, Tolerance>)> {
    let mut global = None;
    let mut per_field = Vec::new();
    for entry in spec.split(',').map(str::trim) {
        if entry.contains('=') {
            per_field.push(entry);
        } else if global.is_some() {
            return Err(AnalysisError::InvalidOption {
                key: "tolerance".into(),
                value: spec.into(),
                allowed: "at most one global tolerance; name the field for the others \
                          (FIELD=TOLERANCE)"
                    .into(),
            });
        } else {
            global = Some(entry.parse::<Tolerance>()?);
        }
    }
    let fields = if per_field.is_empty() {
        BTreeMap::new()
    } else {
        parse_field_tolerances(&per_field.join(","))?
    };
    Ok((global, fields))
}

/// Parses a comma-separated field list (`density,cr_energy_density`): non-empty names, each
/// once.
pub fn parse_field_list(spec: &str) -> Result<Vec<String>> {
    let mut out: Vec<String> = Vec::new();
    for name in spec.split(',').map(str::trim) {
        if name.is_empty() || out.iter().any(|n| n == name) {
            return Err(AnalysisError::InvalidOption {
                key: "fields".into(),
                value: spec.into(),
                allowed: "comma-separated field names, each non-empty and given once \
                          (e.g. density,cr_energy_density)"
                    .into(),
            });
        }
        out.push(name.to_string());
    }
    Ok(out)
}

/// Options of [`compare`].
#[derive(Debug, Clone, PartialEq, Default)]
pub struct CompareOptions {
    /// Fields to compare; `None`: every field present in both profiles, in the reference's
    /// order.
    pub fields: Option<Vec<String>>,
    /// Tolerance for fields without their own.
    pub tolerance: Tolerance,
    /// Per-field tolerances, overriding `tolerance`.
    pub field_tolerances: BTreeMap<String, Tolerance>,
    /// What to do with reference cells OTHER does not cover.
    pub coverage: Coverage,
    /// Remap method; `None`: [`RemapMethod::default_for`] OTHER.
    pub method: Option<RemapMethod>,
}

/// The comparison of one field.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FieldComparison {
    /// Field name.
    pub field: String,
    /// Norms of OTHER − reference (units of the field).
    pub absolute: NormSet,
    /// Norms of the difference divided by the same norms of the reference.
    pub relative: RelativeNormSet,
    /// Norms of the reference values over the compared cells.
    pub reference_norms: NormSet,
    /// The tolerance applied.
    pub tolerance: Tolerance,
    /// The value compared with the tolerance (`None` when a relative norm is undefined).
    pub checked: Option<f64>,
    /// Whether `checked <= tolerance.value`.
    pub pass: bool,
    /// Reason for a failure that is not a plain exceedance.
    pub note: Option<String>,
}

/// The result of [`compare`].
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CompareReport {
    /// Reference source name.
    pub reference: String,
    /// OTHER source name.
    pub other: String,
    /// Remap method used.
    pub method: RemapMethod,
    /// Coverage mode.
    pub coverage: Coverage,
    /// Number of reference cells compared.
    pub compared_cells: usize,
    /// Number of reference cells.
    pub reference_cells: usize,
    /// Coordinate range `[lowest, highest]` of the compared reference cell centres.
    pub compared_range: [f64; 2],
    /// Per-field results.
    pub fields: Vec<FieldComparison>,
    /// True when every field passes.
    pub pass: bool,
}

/// Compares `other` with `reference` on the reference grid.
///
/// OTHER is remapped onto the reference (see the [`remap` module](mod@crate::remap)), the difference
/// `OTHER − reference` is measured in all three norms over the compared cells, and each
/// field passes when the norm selected by its tolerance is `<=` the bound. The verdict passes
/// when every field passes.
pub fn compare(
    reference: &Profile,
    other: &Profile,
    options: &CompareOptions,
) -> Result<CompareReport> {
    let fields: Vec<String> = match &options.fields {
        Some(f) => {
            if f.is_empty() {
                return Err(AnalysisError::InvalidOption {
                    key: "fields".into(),
                    value: String::new(),
                    allowed: "at least one field name".into(),
                });
            }
            for name in f {
                reference.require_field(name)?;
                other.require_field(name)?;
            }
            f.clone()
        }
        None => {
            let common: Vec<String> = reference
                .field_names()
                .into_iter()
                .filter(|n| other.field(n).is_some())
                .map(String::from)
                .collect();
            if common.is_empty() {
                return Err(AnalysisError::InvalidOption {
                    key: "fields".into(),
                    value: "(all common fields)".into(),
                    allowed: format!(
                        "fields present in both profiles; the reference {} has [{}], {} has \
                         [{}]; rename the columns or list the fields",
                        reference.source(),
                        reference.field_names().join(", "),
                        other.source(),
                        other.field_names().join(", ")
                    ),
                });
            }
            common
        }
    };
    for name in options.field_tolerances.keys() {
        if !fields.contains(name) {
            return Err(AnalysisError::InvalidOption {
                key: "field tolerances".into(),
                value: name.clone(),
                allowed: format!("one of the compared fields: {}", fields.join(", ")),
            });
        }
    }
    let method = options
        .method
        .unwrap_or_else(|| RemapMethod::default_for(other));
    let names: Vec<&str> = fields.iter().map(String::as_str).collect();
    let mapped = remap(reference, other, &names, method, options.coverage)?;
    let all_weights = reference.weights()?;
    let weights: Vec<f64> = mapped.covered.iter().map(|&i| all_weights[i]).collect();
    let mut results = Vec::with_capacity(fields.len());
    let mut diff = vec![0.0; mapped.covered.len()];
    let mut refv = vec![0.0; mapped.covered.len()];
    for field in &mapped.fields {
        let r = reference.require_field(&field.name)?;
        for ((d, rv), (&i, o)) in diff
            .iter_mut()
            .zip(refv.iter_mut())
            .zip(mapped.covered.iter().zip(&field.values))
        {
            *rv = r[i];
            *d = o - r[i];
        }
        let absolute = norms(&diff, &weights);
        let reference_norms = norms(&refv, &weights);
        let relative = RelativeNormSet {
            l1: ratio(absolute.l1, reference_norms.l1),
            l2: ratio(absolute.l2, reference_norms.l2),
            linf: ratio(absolute.linf, reference_norms.linf),
        };
        let tolerance = options
            .field_tolerances
            .get(&field.name)
            .copied()
            .unwrap_or(options.tolerance);
        let checked = match tolerance.kind {
            ToleranceKind::Absolute => Some(absolute.get(tolerance.norm)),
            ToleranceKind::Relative => relative.get(tolerance.norm),
        };
        let (pass, note) = match checked {
            Some(c) => (c <= tolerance.value, None),
            None => (
                false,
                Some(format!(
                    "the reference's {} norm of `{}` is zero, so the relative error is \
                     undefined; give this field an absolute tolerance (e.g. {}=abs:{}:1e-8)",
                    tolerance.norm.name(),
                    field.name,
                    field.name,
                    tolerance.norm.name()
                )),
            ),
        };
        results.push(FieldComparison {
            field: field.name.clone(),
            absolute,
            relative,
            reference_norms,
            tolerance,
            checked,
            pass,
            note,
        });
    }
    let c = reference.centres();
    Ok(CompareReport {
        reference: reference.source().into(),
        other: other.source().into(),
        method,
        coverage: options.coverage,
        compared_cells: mapped.covered.len(),
        reference_cells: reference.len(),
        compared_range: [
            c[mapped.covered[0]],
            c[*mapped.covered.last().unwrap_or(&0)],
        ],
        pass: results.iter().all(|r| r.pass),
        fields: results,
    })
}
