//! HDF5 snapshots: the one place in Sluice that talks to an HDF5 library.
//!
//! A [`Snapshot`] is a set of root attributes plus 1D `f64` datasets addressed by
//! absolute paths such as `/fields/density`; intermediate groups are created as
//! needed. [`write_atomic`] writes it to a temporary file beside the target,
//! flushes and fsyncs it, and renames it over the target, so a reader (or a
//! restart) never sees a half-written file. [`read`] returns exactly what
//! [`write_atomic`] wrote (bit-exact `f64`), which restarts rely on.
//!
//! Backend: the pure-Rust `hdf5-pure` crate, pinned to an exact version in the
//! workspace manifest (see `docs/hdf5-backend.md` for why and what was measured).
//! No other Sluice module names `hdf5_pure`, so the backend can be swapped by
//! rewriting this file alone.
//!
//! On-disk layout written here (HDF5 facts from the HDF5 File Format
//! Specification, The HDF Group):
//! * every dataset is a 1D contiguous `H5T_IEEE_F64LE` array;
//! * [`AttrValue::F64`] / [`AttrValue::I64`] are scalar 64-bit float / signed
//!   integer attributes, [`AttrValue::F64s`] a 1D `f64` array attribute;
//! * [`AttrValue::Str`] is a variable-length UTF-8 string (`STRSIZE =
//!   H5T_VARIABLE`, `CSET = UTF-8`), which h5py returns as `str` (fixed-length
//!   strings would come back as `bytes`).
//!
//! Groups carry no attributes of their own; empty groups are never written.

use std::collections::BTreeMap;
use std::fs::{self, File, OpenOptions};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

use hdf5_pure as h5;

/// An attribute value as Sluice writes it.
///
/// Units are not carried by the value: by convention a dataset carries a
/// `units` attribute ([`AttrValue::Str`], cgs) describing its data.
#[derive(Debug, Clone, PartialEq)]
pub enum AttrValue {
    /// A scalar 64-bit float.
    F64(f64),
    /// A scalar 64-bit signed integer.
    I64(i64),
    /// A UTF-8 string, stored as a variable-length HDF5 string (h5py reads it as `str`).
    /// Any length is allowed (the text lives in the file's global heap).
    Str(String),
    /// A 1D array of 64-bit floats. Limited to about 8000 elements by the HDF5
    /// compact attribute storage (64 KiB per attribute message).
    F64s(Vec<f64>),
}

impl AttrValue {
    /// The value if this is [`AttrValue::F64`].
    pub fn as_f64(&self) -> Option<f64> {
        match self {
            AttrValue::F64(x) => Some(*x),
            _ => None,
        }
    }

    /// The value if this is [`AttrValue::I64`].
    pub fn as_i64(&self) -> Option<i64> {
        match self {
            AttrValue::I64(x) => Some(*x),
            _ => None,
        }
    }

    /// The text if this is [`AttrValue::Str`].
    pub fn as_str(&self) -> Option<&str> {
        match self {
            AttrValue::Str(s) => Some(s),
            _ => None,
        }
    }

    /// The values if this is [`AttrValue::F64s`].
    pub fn as_f64s(&self) -> Option<&[f64]> {
        match self {
            AttrValue::F64s(v) => Some(v),
            _ => None,
        }
    }
}

/// A 1D `f64` dataset with its attributes.
#[derive(Debug, Clone, PartialEq)]
pub struct Dataset {
    /// Absolute path inside the file, e.g. `/fields/density`: starts with `/`,
    /// components are non-empty, not `.` or `..`, and contain no NUL.
    pub path: String,
    /// The values (any units; say which in a `units` attribute).
    pub data: Vec<f64>,
    /// Attributes in write order; names must be unique and non-empty.
    pub attrs: Vec<(String, AttrValue)>,
}

impl Dataset {
    /// A dataset with no attributes.
    pub fn new(path: impl Into<String>, data: Vec<f64>) -> Self {
        Dataset {
            path: path.into(),
            data,
            attrs: Vec::new(),
        }
    }

    /// Adds an attribute (builder style).
    pub fn with_attr(mut self, name: impl Into<String>, value: AttrValue) -> Self {
        self.attrs.push((name.into(), value));
        self
    }

    /// The attribute called `name`, if any.
    pub fn attr(&self, name: &str) -> Option<&AttrValue> {
        find_attr(&self.attrs, name)
    }
}

/// A whole snapshot file: root attributes and datasets.
///
/// [`read`] returns attributes sorted by name and datasets sorted by path
/// (HDF5 keeps no order for them); [`Snapshot::sorted`] gives the same order
/// for comparison with a snapshot built in memory.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Snapshot {
    /// Attributes of the root group `/`; names must be unique and non-empty.
    pub attrs: Vec<(String, AttrValue)>,
    /// The datasets; paths must be unique and no dataset path may be a group of another.
    pub datasets: Vec<Dataset>,
}

impl Snapshot {
    /// The dataset at `path` (e.g. `/fields/density`), if any.
    pub fn dataset(&self, path: &str) -> Option<&Dataset> {
        self.datasets.iter().find(|d| d.path == path)
    }

    /// The root attribute called `name`, if any.
    pub fn attr(&self, name: &str) -> Option<&AttrValue> {
        find_attr(&self.attrs, name)
    }

    /// A copy with attributes sorted by name and datasets sorted by path: the
    /// order in which [`read`] returns them.
    pub fn sorted(&self) -> Snapshot {
        let mut s = self.clone();
        s.attrs.sort_by(|a, b| a.0.cmp(&b.0));
        s.datasets.sort_by(|a, b| a.path.cmp(&b.path));
        for d in &mut s.datasets {
            d.attrs.sort_by(|a, b| a.0.cmp(&b.0));
        }
        s
    }
}

fn find_attr<'a>(attrs: &'a [(String, AttrValue)], name: &str) -> Option<&'a AttrValue> {
    attrs.iter().find(|(n, _)| n == name).map(|(_, v)| v)
}

/// Errors of snapshot writing and reading. Every variant names the file.
#[derive(Debug, thiserror::Error)]
pub enum SnapshotError {
    /// The operating system refused an operation on `path`.
    #[error("snapshot I/O error: cannot {op} `{}`: {source}", path.display())]
    Io {
        /// The file or directory the failing operation acted on.
        path: PathBuf,
        /// What was being done, e.g. "create temporary file".
        op: &'static str,
        /// The OS error.
        #[source]
        source: std::io::Error,
    },
    /// The file is not a Sluice snapshot the reader understands (not HDF5,
    /// corrupt, or holding types Sluice never writes).
    #[error("snapshot `{}` cannot be read: {msg}", path.display())]
    Format {
        /// The snapshot file.
        path: PathBuf,
        /// What is wrong, naming the object inside the file.
        msg: String,
    },
    /// The in-memory snapshot cannot be written as asked (bad dataset path,
    /// duplicate name, ...). Nothing was written.
    #[error("snapshot `{}` not written: {msg}", path.display())]
    Invalid {
        /// The target file.
        path: PathBuf,
        /// What is wrong and what is allowed.
        msg: String,
    },
}

// ---------------------------------------------------------------------------
// Writing

/// Writes `snap` to `path` atomically.
///
/// The file is encoded in memory first (so invalid content never touches the
/// disk), then written to `.<name>.tmp-<pid>-<n>` in the target's directory,
/// flushed and fsynced, and renamed over `path`; the directory is fsynced after
/// the rename. On any error the temporary file is removed and `path` is left as
/// it was (absent or with its previous content).
pub fn write_atomic(path: &Path, snap: &Snapshot) -> Result<(), SnapshotError> {
    let bytes = encode(path, snap)?;

    let name = path.file_name().ok_or_else(|| SnapshotError::Invalid {
        path: path.to_path_buf(),
        msg: "the target path has no file name".into(),
    })?;
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    static COUNTER: AtomicU64 = AtomicU64::new(0);
    let n = COUNTER.fetch_add(1, Ordering::Relaxed);
    let mut tmp_name = std::ffi::OsString::from(".");
    tmp_name.push(name);
    tmp_name.push(format!(".tmp-{}-{n}", std::process::id()));
    let tmp = TempFile {
        path: dir.join(tmp_name),
    };

    let io = |p: &Path, op: &'static str| {
        let p = p.to_path_buf();
        move |source| SnapshotError::Io {
            path: p,
            op,
            source,
        }
    };
    let mut file = OpenOptions::new()
        .write(true)
        .create(true)
        .truncate(true)
        .open(&tmp.path)
        .map_err(io(&tmp.path, "create temporary file"))?;
    file.write_all(&bytes)
        .map_err(io(&tmp.path, "write temporary file"))?;
    file.flush()
        .map_err(io(&tmp.path, "flush temporary file"))?;
    file.sync_all()
        .map_err(io(&tmp.path, "fsync temporary file"))?;
    drop(file);
    fs::rename(&tmp.path, path).map_err(io(path, "rename temporary file over"))?;
    tmp.disarm();

    // Make the rename itself durable. Some filesystems cannot fsync a
    // directory (EINVAL); the data is already safely in place then.
    if let Ok(d) = File::open(&dir) {
        match d.sync_all() {
            Ok(()) => {}
            Err(e) if e.kind() == std::io::ErrorKind::InvalidInput => {}
            Err(e) => return Err(io(&dir, "fsync directory")(e)),
        }
    }
    Ok(())
}

/// Removes the temporary file on drop unless disarmed (also on panic).
struct TempFile {
    path: PathBuf,
}

impl TempFile {
    fn disarm(self) {
        std::mem::forget(self);
    }
}

impl Drop for TempFile {
    fn drop(&mut self) {
        let _ = fs::remove_file(&self.path);
    }
}

/// A group being assembled: child datasets and child groups by link name.
#[derive(Default)]
struct Node<'a> {
    datasets: BTreeMap<&'a str, &'a Dataset>,
    groups: BTreeMap<&'a str, Node<'a>>,
}

fn check_attrs(attrs: &[(String, AttrValue)], owner: &str) -> Result<(), String> {
    let mut seen = std::collections::BTreeSet::new();
    for (name, value) in attrs {
        if name.is_empty() || name.contains('\0') {
            return Err(format!(
                "attribute name {name:?} on {owner} is not allowed (must be non-empty, no NUL)"
            ));
        }
        if !seen.insert(name.as_str()) {
            return Err(format!(
                "attribute `{name}` appears twice on {owner} (names must be unique)"
            ));
        }
        if let AttrValue::F64s(v) = value {
            // 8 bytes per value plus the message header must fit a 2-byte
            // message size (HDF5 File Format Specification, version 2 object
            // header messages).
            if v.len() > 8000 {
                return Err(format!(
                    "attribute `{name}` on {owner} has {} values; at most 8000 fit an HDF5 \
                     attribute (store it as a dataset instead)",
                    v.len()
                ));
            }
        }
    }
    Ok(())
}

fn build_tree(snap: &Snapshot) -> Result<Node<'_>, String> {
    check_attrs(&snap.attrs, "the root group")?;
    let mut root = Node::default();
    for d in &snap.datasets {
        let Some(rest) = d.path.strip_prefix('/') else {
            return Err(format!(
                "dataset path {:?} must be absolute, like \"/fields/density\"",
                d.path
            ));
        };
        let parts: Vec<&str> = rest.split('/').collect();
        if let Some(bad) = parts
            .iter()
            .find(|p| p.is_empty() || **p == "." || **p == ".." || p.contains('\0'))
        {
            return Err(format!(
                "dataset path {:?} has the component {bad:?}; components must be non-empty, \
                 not \".\" or \"..\", and contain no NUL",
                d.path
            ));
        }
        check_attrs(&d.attrs, &format!("dataset `{}`", d.path))?;
        let (leaf, groups) = parts.split_last().expect("split yields at least one part");
        let mut node = &mut root;
        for (i, g) in groups.iter().enumerate() {
            if node.datasets.contains_key(g) {
                return Err(format!(
                    "dataset `{}` needs `/{}` to be a group, but it is a dataset",
                    d.path,
                    parts[..=i].join("/")
                ));
            }
            node = node.groups.entry(g).or_default();
        }
        if node.groups.contains_key(leaf) {
            return Err(format!(
                "dataset `{}` clashes with a group of the same path",
                d.path
            ));
        }
        if node.datasets.insert(leaf, d).is_some() {
            return Err(format!("dataset `{}` appears twice", d.path));
        }
    }
    Ok(root)
}

fn to_h5(v: &AttrValue) -> h5::AttrValue {
    match v {
        AttrValue::F64(x) => h5::AttrValue::F64(*x),
        AttrValue::I64(x) => h5::AttrValue::I64(*x),
        AttrValue::Str(s) => h5::AttrValue::VarLenString(s.clone()),
        AttrValue::F64s(v) => h5::AttrValue::F64Array(v.clone()),
    }
}

/// What the root builder and the group builder have in common.
trait Parent {
    fn dataset(&mut self, name: &str) -> &mut h5::DatasetBuilder;
    fn group(&mut self, name: &str) -> h5::GroupBuilder;
    fn add(&mut self, g: h5::FinishedGroup);
}

impl Parent for h5::FileBuilder {
    fn dataset(&mut self, name: &str) -> &mut h5::DatasetBuilder {
        self.create_dataset(name)
    }
    fn group(&mut self, name: &str) -> h5::GroupBuilder {
        self.create_group(name)
    }
    fn add(&mut self, g: h5::FinishedGroup) {
        self.add_group(g)
    }
}

impl Parent for h5::GroupBuilder {
    fn dataset(&mut self, name: &str) -> &mut h5::DatasetBuilder {
        self.create_dataset(name)
    }
    fn group(&mut self, name: &str) -> h5::GroupBuilder {
        self.create_group(name)
    }
    fn add(&mut self, g: h5::FinishedGroup) {
        self.add_group(g)
    }
}

fn emit<P: Parent>(parent: &mut P, node: &Node<'_>) {
    for (name, d) in &node.datasets {
        let b = parent.dataset(name);
        b.with_f64_data(&d.data).with_shape(&[d.data.len() as u64]);
        for (an, av) in &d.attrs {
            b.set_attr(an, to_h5(av));
        }
    }
    for (name, child) in &node.groups {
        let mut g = parent.group(name);
        emit(&mut g, child);
        parent.add(g.finish());
    }
}

/// Encodes the snapshot into the bytes of an HDF5 file.
fn encode(path: &Path, snap: &Snapshot) -> Result<Vec<u8>, SnapshotError> {
    let invalid = |msg: String| SnapshotError::Invalid {
        path: path.to_path_buf(),
        msg,
    };
    let tree = build_tree(snap).map_err(invalid)?;
    let mut fb = h5::FileBuilder::new();
    for (name, v) in &snap.attrs {
        fb.set_attr(name, to_h5(v));
    }
    emit(&mut fb, &tree);
    fb.finish()
        .map_err(|e| invalid(format!("the HDF5 encoder refused it: {e}")))
}

// ---------------------------------------------------------------------------
// Reading

/// Reads a snapshot written by [`write_atomic`].
///
/// Returns root attributes sorted by name, datasets sorted by path and each
/// dataset's attributes sorted by name. Datasets must be 1D (or empty) 64-bit
/// floats and attributes one of the [`AttrValue`] kinds; anything else (or
/// attributes on a non-root group, which Sluice never writes) is a
/// [`SnapshotError::Format`] naming the object, rather than silently dropped.
pub fn read(path: &Path) -> Result<Snapshot, SnapshotError> {
    let file = h5::File::open(path).map_err(|e| match e {
        h5::Error::Io(source) => SnapshotError::Io {
            path: path.to_path_buf(),
            op: "open snapshot",
            source,
        },
        other => SnapshotError::Format {
            path: path.to_path_buf(),
            msg: format!("not a readable HDF5 file: {other}"),
        },
    })?;
    let fmt = |msg: String| SnapshotError::Format {
        path: path.to_path_buf(),
        msg,
    };
    // A cut-off file can still parse (the reader finds the early objects) while
    // losing whatever lay past the cut, so compare the superblock's
    // end-of-file address with the real length (HDF5 File Format
    // Specification, superblock field "End of File Address").
    let sb = file.superblock();
    let needed = sb.base_address.get().saturating_add(sb.eof_address);
    let have = file.file_size();
    if have < needed {
        return Err(fmt(format!(
            "the file is truncated: {have} bytes, but its superblock says {needed}"
        )));
    }
    let root = file.root();
    let mut snap = Snapshot {
        attrs: read_attrs(root.attrs(), root.attr_datatypes(), "the root group").map_err(fmt)?,
        datasets: Vec::new(),
    };
    read_group(&root, "", true, &mut snap.datasets).map_err(fmt)?;
    snap.datasets.sort_by(|a, b| a.path.cmp(&b.path));
    Ok(snap)
}

fn read_group(
    group: &h5::Group,
    prefix: &str,
    is_root: bool,
    out: &mut Vec<Dataset>,
) -> Result<(), String> {
    let gname = if is_root { "/" } else { prefix };
    if !is_root {
        let attrs = group
            .attrs()
            .map_err(|e| format!("attributes of group `{gname}`: {e}"))?;
        if !attrs.is_empty() {
            let mut names: Vec<_> = attrs.keys().cloned().collect();
            names.sort();
            return Err(format!(
                "group `{gname}` has attributes {names:?}; Sluice snapshots keep attributes \
                 only on the root group and on datasets"
            ));
        }
    }
    let mut names = group
        .datasets()
        .map_err(|e| format!("listing datasets of group `{gname}`: {e}"))?;
    names.sort();
    for name in names {
        let dpath = format!("{prefix}/{name}");
        let ds = group
            .dataset(&name)
            .map_err(|e| format!("opening dataset `{dpath}`: {e}"))?;
        let dtype = ds
            .datatype()
            .map_err(|e| format!("datatype of dataset `{dpath}`: {e}"))?;
        if !matches!(dtype, h5::Datatype::FloatingPoint { size: 8, .. }) {
            return Err(format!(
                "dataset `{dpath}` has datatype {dtype:?}; Sluice snapshots hold 64-bit floats only"
            ));
        }
        let shape = ds
            .shape()
            .map_err(|e| format!("shape of dataset `{dpath}`: {e}"))?;
        if shape.len() != 1 {
            return Err(format!(
                "dataset `{dpath}` has shape {shape:?}; Sluice snapshots hold 1D datasets only"
            ));
        }
        let data = ds
            .read_f64()
            .map_err(|e| format!("reading dataset `{dpath}`: {e}"))?;
        if data.len() as u64 != shape[0] {
            return Err(format!(
                "dataset `{dpath}` read {} values but its shape is {shape:?}",
                data.len()
            ));
        }
        let attrs = read_attrs(
            ds.attrs(),
            ds.attr_datatypes(),
            &format!("dataset `{dpath}`"),
        )?;
        out.push(Dataset {
            path: dpath,
            data,
            attrs,
        });
    }
    let mut groups = group
        .groups()
        .map_err(|e| format!("listing groups of group `{gname}`: {e}"))?;
    groups.sort();
    for name in groups {
        let gpath = format!("{prefix}/{name}");
        let child = group
            .group(&name)
            .map_err(|e| format!("opening group `{gpath}`: {e}"))?;
        read_group(&child, &gpath, false, out)?;
    }
    Ok(())
}

/// Converts the attributes of one object. `types` lists every attribute
/// message present; the backend's value map silently omits the ones it cannot
/// decode, so a name only in `types` is reported instead of dropped.
fn read_attrs(
    attrs: Result<std::collections::HashMap<String, h5::AttrValue>, h5::Error>,
    types: Result<std::collections::HashMap<String, h5::Datatype>, h5::Error>,
    owner: &str,
) -> Result<Vec<(String, AttrValue)>, String> {
    let attrs = attrs.map_err(|e| format!("attributes of {owner}: {e}"))?;
    let types = types.map_err(|e| format!("attribute types of {owner}: {e}"))?;
    let mut lost: Vec<&String> = types.keys().filter(|n| !attrs.contains_key(*n)).collect();
    if !lost.is_empty() {
        lost.sort();
        return Err(format!(
            "attributes {lost:?} of {owner} are present but their values cannot be decoded"
        ));
    }
    let mut out = Vec::with_capacity(attrs.len());
    for (name, v) in attrs {
        let value = match v {
            h5::AttrValue::F64(x) => AttrValue::F64(x),
            h5::AttrValue::I64(x) => AttrValue::I64(x),
            h5::AttrValue::F64Array(v) => AttrValue::F64s(v),
            h5::AttrValue::VarLenString(s)
            | h5::AttrValue::String(s)
            | h5::AttrValue::VarLenAsciiString(s)
            | h5::AttrValue::AsciiString(s) => AttrValue::Str(s),
            other => {
                return Err(format!(
                    "attribute `{name}` of {owner} has HDF5 type {}; Sluice reads f64, i64, \
                     f64 arrays and strings",
                    other.type_name()
                ))
            }
        };
        out.push((name, value));
    }
    out.sort_by(|a, b| a.0.cmp(&b.0));
    Ok(out)
}

// ---------------------------------------------------------------------------
// Reading selected datasets of any HDF5 file

/// Reads the datasets at `paths` (e.g. `["/x", "/fields/rho"]`) from any HDF5 file, such as
/// one written by h5py or by another code.
///
/// Unlike [`read`], the file need not follow the Sluice layout: groups may carry attributes
/// and other objects are ignored. Each requested dataset must hold numbers (IEEE floats or
/// integers of any width and byte order, converted to `f64`) and be 1D, or N-D with at most
/// one dimension longer than 1 (e.g. a `(1, 1, N)` line-out of a 3D array), which is
/// flattened. Contiguous, compact and chunked layouts are read, with the filters of the
/// `hdf5-pure` backend (deflate/gzip, shuffle, Fletcher-32, LZF, scale-offset, among others);
/// a dataset it cannot decode is an error naming the dataset and its layout and filters.
///
/// Each returned [`Dataset`] has the requested path (with a leading `/`), the values and the
/// attributes that are scalars, `f64` arrays or strings (others, e.g. compound attributes,
/// are left out: only `units` is used by Sluice). A missing path is an error listing the
/// datasets present in the file.
pub fn read_datasets(path: &Path, paths: &[&str]) -> Result<Vec<Dataset>, SnapshotError> {
    let file = h5::File::open(path).map_err(|e| match e {
        h5::Error::Io(source) => SnapshotError::Io {
            path: path.to_path_buf(),
            op: "open HDF5 file",
            source,
        },
        other => SnapshotError::Format {
            path: path.to_path_buf(),
            msg: format!("not a readable HDF5 file: {other}"),
        },
    })?;
    let fmt = |msg: String| SnapshotError::Format {
        path: path.to_path_buf(),
        msg,
    };
    let mut out = Vec::with_capacity(paths.len());
    for &p in paths {
        let full = if p.starts_with('/') {
            p.to_string()
        } else {
            format!("/{p}")
        };
        let ds = match file.dataset(&full) {
            Ok(d) => d,
            Err(e) => {
                let mut present = Vec::new();
                list_datasets(&file.root(), "", &mut present);
                present.sort();
                let present = if present.is_empty() {
                    "(none)".to_string()
                } else {
                    present.join(", ")
                };
                return Err(fmt(format!(
                    "no dataset `{full}` ({e}); datasets in the file: {present}"
                )));
            }
        };
        let dtype = ds
            .datatype()
            .map_err(|e| fmt(format!("datatype of dataset `{full}`: {e}")))?;
        if !matches!(
            dtype,
            h5::Datatype::FloatingPoint { .. } | h5::Datatype::FixedPoint { .. }
        ) {
            return Err(fmt(format!(
                "dataset `{full}` has datatype {dtype:?}; allowed: floating-point or integer \
                 numbers"
            )));
        }
        let shape = ds
            .shape()
            .map_err(|e| fmt(format!("shape of dataset `{full}`: {e}")))?;
        if shape.iter().filter(|&&d| d > 1).count() > 1 {
            return Err(fmt(format!(
                "dataset `{full}` has shape {shape:?}; allowed: 1D, or N-D with at most one \
                 dimension longer than 1 (export the line-out as a 1D array)"
            )));
        }
        let expected: u64 = shape.iter().product();
        let data = ds.read_f64().map_err(|e| {
            let layout = ds
                .layout()
                .map(|l| format!("{l:?}"))
                .unwrap_or_else(|_| "unknown".into());
            fmt(format!(
                "reading dataset `{full}` (layout {layout}, filter ids {:?}): {e}; the reader \
                 handles contiguous, compact and chunked datasets with the standard filters \
                 (deflate/gzip, shuffle, Fletcher-32, LZF, scale-offset); rewrite the dataset \
                 without other filters, e.g. h5py `create_dataset(name, data=a)`",
                ds.filters()
            ))
        })?;
        if data.len() as u64 != expected {
            return Err(fmt(format!(
                "dataset `{full}` read {} values but its shape is {shape:?}",
                data.len()
            )));
        }
        let mut attrs = Vec::new();
        if let Ok(map) = ds.attrs() {
            for (name, v) in map {
                let value = match v {
                    h5::AttrValue::F64(x) => AttrValue::F64(x),
                    h5::AttrValue::I64(x) => AttrValue::I64(x),
                    h5::AttrValue::F64Array(v) => AttrValue::F64s(v),
                    h5::AttrValue::VarLenString(s)
                    | h5::AttrValue::String(s)
                    | h5::AttrValue::VarLenAsciiString(s)
                    | h5::AttrValue::AsciiString(s) => AttrValue::Str(s),
                    _ => continue,
                };
                attrs.push((name, value));
            }
        }
        attrs.sort_by(|a, b| a.0.cmp(&b.0));
        out.push(Dataset {
            path: full,
            data,
            attrs,
        });
    }
    Ok(out)
}

/// Collects the absolute paths of all datasets below `group` (best effort: unreadable
/// groups are skipped; used only to list what exists in an error message).
fn list_datasets(group: &h5::Group, prefix: &str, out: &mut Vec<String>) {
    if let Ok(names) = group.datasets() {
        out.extend(names.into_iter().map(|n| format!("{prefix}/{n}")));
    }
    if let Ok(groups) = group.groups() {
        for name in groups {
            if let Ok(child) = group.group(&name) {
                list_datasets(&child, &format!("{prefix}/{name}"), out);
            }
        }
    }
}

// ---------------------------------------------------------------------------

#[cfg(test)]
mod tests {
    use super::*;

    /// A fresh empty directory under the system temp dir, removed on drop.
    struct TmpDir(PathBuf);

    impl TmpDir {
        fn new(tag: &str) -> Self {
            static N: AtomicU64 = AtomicU64::new(0);
            let p = std::env::temp_dir().join(format!(
                "sluice-snapshot-test-{}-{tag}-{}",
                std::process::id(),
                N.fetch_add(1, Ordering::Relaxed)
            ));
            let _ = fs::remove_dir_all(&p);
            fs::create_dir_all(&p).unwrap();
            TmpDir(p)
        }
        fn entries(&self) -> Vec<String> {
            let mut v: Vec<String> = fs::read_dir(&self.0)
                .unwrap()
                .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
                .collect();
            v.sort();
            v
        }
    }

    impl Drop for TmpDir {
        fn drop(&mut self) {
            let _ = fs::remove_dir_all(&self.0);
        }
    }

    /// Bit-level equality (NaN payloads and signed zeros included).
    fn assert_bits_eq(a: &Snapshot, b: &Snapshot) {
        fn attr_bits(v: &AttrValue) -> String {
            match v {
                AttrValue::F64(x) => format!("f64:{:016x}", x.to_bits()),
                AttrValue::F64s(xs) => format!(
                    "f64s:{:?}",
                    xs.iter().map(|x| x.to_bits()).collect::<Vec<_>>()
                ),
                other => format!("{other:?}"),
            }
        }
        let (a, b) = (a.sorted(), b.sorted());
        assert_eq!(a.attrs.len(), b.attrs.len(), "root attribute count");
        for ((na, va), (nb, vb)) in a.attrs.iter().zip(&b.attrs) {
            assert_eq!(na, nb);
            assert_eq!(attr_bits(va), attr_bits(vb), "root attribute {na}");
        }
        assert_eq!(a.datasets.len(), b.datasets.len(), "dataset count");
        for (da, db) in a.datasets.iter().zip(&b.datasets) {
            assert_eq!(da.path, db.path);
            let ba: Vec<u64> = da.data.iter().map(|x| x.to_bits()).collect();
            let bb: Vec<u64> = db.data.iter().map(|x| x.to_bits()).collect();
            assert_eq!(ba, bb, "data of {}", da.path);
            assert_eq!(da.attrs.len(), db.attrs.len(), "attrs of {}", da.path);
            for ((na, va), (nb, vb)) in da.attrs.iter().zip(&db.attrs) {
                assert_eq!(na, nb);
                assert_eq!(attr_bits(va), attr_bits(vb), "{}@{na}", da.path);
            }
        }
    }

    /// Awkward f64 values: signed zeros, subnormals, extremes, infinities,
    /// a NaN with a payload, and values that do not round-trip through f32
    /// or through short decimal printing.
    fn awkward() -> Vec<f64> {
        vec![
            0.0,
            -0.0,
            1.0,
            -1.5,
            f64::MIN_POSITIVE,
            f64::MIN_POSITIVE / 3.0, // subnormal
            f64::from_bits(1),       // smallest subnormal
            f64::MAX,
            f64::MIN,
            f64::EPSILON,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::from_bits(0x7ff8_0000_dead_beef), // NaN with payload
            std::f64::consts::PI,
            0.1 + 0.2,
            1.0e-300,
            6.02214076e23,
        ]
    }

    fn sample() -> Snapshot {
        let n = 1000;
        let density: Vec<f64> = (0..n).map(|i| 1.0 + (i as f64 * 0.37).sin()).collect();
        Snapshot {
            attrs: vec![
                ("time".into(), AttrValue::F64(1.25e13)),
                ("step".into(), AttrValue::I64(-42)),
                ("big".into(), AttrValue::I64(i64::MAX)),
                ("title".into(), AttrValue::Str("sod test".into())),
                ("domain".into(), AttrValue::F64s(vec![-1.0, 1.0])),
                ("awkward".into(), AttrValue::F64s(awkward())),
            ],
            datasets: vec![
                Dataset::new("/fields/density", density)
                    .with_attr("units", AttrValue::Str("g cm^-3".into())),
                Dataset::new("/fields/awkward", awkward())
                    .with_attr("units", AttrValue::Str("1".into()))
                    .with_attr("scale", AttrValue::F64(-0.0)),
                Dataset::new("/x", vec![0.5, 1.5]).with_attr("n", AttrValue::I64(2)),
            ],
        }
    }

    #[test]
    fn round_trip_is_bit_exact() {
        let dir = TmpDir::new("rt");
        let p = dir.0.join("snap.h5");
        let snap = sample();
        write_atomic(&p, &snap).unwrap();
        let back = read(&p).unwrap();
        assert_bits_eq(&snap, &back);
        // Order contract of `read`.
        let paths: Vec<&str> = back.datasets.iter().map(|d| d.path.as_str()).collect();
        assert_eq!(paths, ["/fields/awkward", "/fields/density", "/x"]);
        assert_eq!(back.attr("step"), Some(&AttrValue::I64(-42)));
        assert_eq!(
            back.dataset("/fields/density")
                .and_then(|d| d.attr("units"))
                .and_then(AttrValue::as_str),
            Some("g cm^-3")
        );
        // Nothing else left in the directory (no temporary file).
        assert_eq!(dir.entries(), ["snap.h5"]);
        // The file really is HDF5: the 8-byte signature at offset 0 (HDF5 File
        // Format Specification, "Format Signature").
        let bytes = fs::read(&p).unwrap();
        assert_eq!(&bytes[..8], b"\x89HDF\r\n\x1a\n");
    }

    #[test]
    fn overwrite_replaces_previous_content() {
        let dir = TmpDir::new("over");
        let p = dir.0.join("snap.h5");
        write_atomic(&p, &sample()).unwrap();
        let second = Snapshot {
            attrs: vec![("step".into(), AttrValue::I64(2))],
            datasets: vec![Dataset::new("/a", vec![3.0])],
        };
        write_atomic(&p, &second).unwrap();
        assert_eq!(read(&p).unwrap(), second);
        assert_eq!(dir.entries(), ["snap.h5"]);
    }

    #[test]
    fn nested_groups() {
        let dir = TmpDir::new("nest");
        let p = dir.0.join("n.h5");
        let snap = Snapshot {
            attrs: vec![],
            datasets: vec![
                Dataset::new("/a/b/c/d/deep", vec![1.0, 2.0, 3.0]),
                Dataset::new("/a/b/sibling", vec![4.0]),
                Dataset::new("/a/top", vec![5.0]),
                Dataset::new("/z/other", vec![6.0]),
                Dataset::new("/root_level", vec![7.0]),
            ],
        };
        write_atomic(&p, &snap).unwrap();
        let back = read(&p).unwrap();
        assert_eq!(back, snap.sorted());
        assert_eq!(
            back.dataset("/a/b/c/d/deep").unwrap().data,
            vec![1.0, 2.0, 3.0]
        );
    }

    #[test]
    fn empty_dataset_and_empty_snapshot() {
        let dir = TmpDir::new("empty");
        let p = dir.0.join("e.h5");
        let snap = Snapshot {
            attrs: vec![
                ("none".into(), AttrValue::F64s(vec![])),
                ("blank".into(), AttrValue::Str(String::new())),
            ],
            datasets: vec![Dataset::new("/fields/nothing", vec![])
                .with_attr("units", AttrValue::Str("cm".into()))],
        };
        write_atomic(&p, &snap).unwrap();
        assert_eq!(read(&p).unwrap(), snap.sorted());

        let q = dir.0.join("nothing.h5");
        write_atomic(&q, &Snapshot::default()).unwrap();
        assert_eq!(read(&q).unwrap(), Snapshot::default());
    }

    #[test]
    fn unicode_strings_and_names() {
        let dir = TmpDir::new("uni");
        let p = dir.0.join("ü.h5");
        let text = "ρ in g cm⁻³ · 宇宙線 · émoji 🌌 · \"quoted\" \\ back\ttab\nnewline";
        let snap = Snapshot {
            attrs: vec![("título".into(), AttrValue::Str(text.into()))],
            datasets: vec![Dataset::new("/grupo/densité", vec![1.0])
                .with_attr("units", AttrValue::Str("g cm⁻³".into()))],
        };
        write_atomic(&p, &snap).unwrap();
        let back = read(&p).unwrap();
        assert_eq!(back, snap.sorted());
        assert_eq!(back.attr("título").and_then(AttrValue::as_str), Some(text));
    }

    #[test]
    fn long_string_attribute_of_a_whole_deck() {
        let dir = TmpDir::new("long");
        let p = dir.0.join("deck.h5");
        // ~20 kB of deck-like text, plus a 200 kB one to pass the 64 KiB
        // object-header message limit that a fixed-length string would hit.
        let mut deck = String::new();
        let mut i = 0;
        while deck.len() < 20_000 {
            deck.push_str(&format!(
                "[section_{i}]\nkey_{i} = {}\nname = \"value ü {i}\"\n\n",
                i as f64 * 0.1
            ));
            i += 1;
        }
        let huge = deck.repeat(10);
        let snap = Snapshot {
            attrs: vec![
                ("deck".into(), AttrValue::Str(deck.clone())),
                ("huge".into(), AttrValue::Str(huge.clone())),
            ],
            datasets: vec![Dataset::new("/d", vec![1.0]).with_attr("deck", AttrValue::Str(deck))],
        };
        write_atomic(&p, &snap).unwrap();
        let back = read(&p).unwrap();
        assert_eq!(back, snap.sorted());
        assert_eq!(
            back.attr("huge").and_then(AttrValue::as_str).unwrap().len(),
            huge.len()
        );
    }

    #[test]
    fn large_dataset() {
        let dir = TmpDir::new("large");
        let p = dir.0.join("l.h5");
        let data: Vec<f64> = (0..200_000).map(|i| (i as f64).sqrt() * 1e-7).collect();
        let snap = Snapshot {
            attrs: vec![],
            datasets: vec![Dataset::new("/f/v", data)],
        };
        write_atomic(&p, &snap).unwrap();
        assert_bits_eq(&snap, &read(&p).unwrap());
    }

    #[test]
    fn missing_directory_fails_and_writes_nothing() {
        let dir = TmpDir::new("nodir");
        let p = dir.0.join("no/such/dir/snap.h5");
        let err = write_atomic(&p, &sample()).unwrap_err();
        let msg = err.to_string();
        assert!(matches!(err, SnapshotError::Io { .. }), "{msg}");
        assert!(
            msg.contains("no/such/dir"),
            "error must name the path: {msg}"
        );
        assert!(dir.entries().is_empty());
    }

    #[test]
    fn failed_rename_leaves_target_and_no_temp_file() {
        // The target is an existing non-empty directory: the temporary file is
        // written completely, then the rename fails (a file cannot replace a
        // directory, POSIX rename(2)). Works as root too, unlike permission bits.
        let dir = TmpDir::new("rename");
        let target = dir.0.join("snap.h5");
        fs::create_dir(&target).unwrap();
        fs::write(target.join("keep"), b"old").unwrap();
        let err = write_atomic(&target, &sample()).unwrap_err();
        let msg = err.to_string();
        assert!(matches!(err, SnapshotError::Io { .. }), "{msg}");
        assert!(msg.contains("snap.h5"), "{msg}");
        assert_eq!(dir.entries(), ["snap.h5"], "temporary file must be removed");
        assert_eq!(fs::read(target.join("keep")).unwrap(), b"old");
    }

    #[test]
    fn invalid_snapshot_leaves_existing_target_untouched() {
        let dir = TmpDir::new("invalid");
        let p = dir.0.join("snap.h5");
        write_atomic(&p, &sample()).unwrap();
        let before = fs::read(&p).unwrap();
        let bad_cases: Vec<(Snapshot, &str)> = vec![
            (
                Snapshot {
                    attrs: vec![],
                    datasets: vec![Dataset::new("fields/rho", vec![1.0])],
                },
                "absolute",
            ),
            (
                Snapshot {
                    attrs: vec![],
                    datasets: vec![Dataset::new("/a//b", vec![1.0])],
                },
                "component",
            ),
            (
                Snapshot {
                    attrs: vec![],
                    datasets: vec![Dataset::new("/a/../b", vec![1.0])],
                },
                "component",
            ),
            (
                Snapshot {
                    attrs: vec![],
                    datasets: vec![Dataset::new("/a", vec![1.0]), Dataset::new("/a", vec![2.0])],
                },
                "twice",
            ),
            (
                Snapshot {
                    attrs: vec![],
                    datasets: vec![
                        Dataset::new("/a", vec![1.0]),
                        Dataset::new("/a/b", vec![2.0]),
                    ],
                },
                "is a dataset",
            ),
            (
                Snapshot {
                    attrs: vec![],
                    datasets: vec![
                        Dataset::new("/a/b", vec![1.0]),
                        Dataset::new("/a", vec![2.0]),
                    ],
                },
                "clashes",
            ),
            (
                Snapshot {
                    attrs: vec![
                        ("t".into(), AttrValue::F64(1.0)),
                        ("t".into(), AttrValue::F64(2.0)),
                    ],
                    datasets: vec![],
                },
                "twice",
            ),
            (
                Snapshot {
                    attrs: vec![(String::new(), AttrValue::F64(1.0))],
                    datasets: vec![],
                },
                "non-empty",
            ),
            (
                Snapshot {
                    attrs: vec![("many".into(), AttrValue::F64s(vec![0.0; 9000]))],
                    datasets: vec![],
                },
                "at most 8000",
            ),
        ];
        for (bad, needle) in bad_cases {
            let err = write_atomic(&p, &bad).unwrap_err();
            let msg = err.to_string();
            assert!(matches!(err, SnapshotError::Invalid { .. }), "{msg}");
            assert!(msg.contains(needle), "expected {needle:?} in: {msg}");
            assert!(msg.contains("snap.h5"), "error must name the file: {msg}");
            assert_eq!(fs::read(&p).unwrap(), before, "target changed by: {msg}");
            assert_eq!(dir.entries(), ["snap.h5"]);
        }
    }

    #[test]
    fn f64_array_attribute_at_the_size_limit() {
        let dir = TmpDir::new("limit");
        let p = dir.0.join("s.h5");
        let v: Vec<f64> = (0..8000).map(|i| i as f64 / 7.0).collect();
        let snap = Snapshot {
            attrs: vec![("many".into(), AttrValue::F64s(v))],
            datasets: vec![],
        };
        write_atomic(&p, &snap).unwrap();
        assert_bits_eq(&snap, &read(&p).unwrap());
    }

    #[test]
    fn read_errors_name_the_file() {
        let dir = TmpDir::new("readerr");
        let missing = dir.0.join("missing.h5");
        let err = read(&missing).unwrap_err();
        assert!(matches!(err, SnapshotError::Io { .. }), "{err}");
        assert!(err.to_string().contains("missing.h5"), "{err}");

        let junk = dir.0.join("junk.h5");
        fs::write(&junk, b"this is not an HDF5 file at all, just text").unwrap();
        let err = read(&junk).unwrap_err();
        assert!(matches!(err, SnapshotError::Format { .. }), "{err}");
        assert!(err.to_string().contains("junk.h5"), "{err}");

        // A truncated snapshot (what a non-atomic writer could leave behind).
        let good = dir.0.join("good.h5");
        write_atomic(&good, &sample()).unwrap();
        let bytes = fs::read(&good).unwrap();
        // Cut at several places: every cut must be an error (never a silent
        // partial read) that names the file.
        let cut = dir.0.join("cut.h5");
        for frac in [0.1, 0.5, 0.9, 0.999] {
            let n = (bytes.len() as f64 * frac) as usize;
            fs::write(&cut, &bytes[..n]).unwrap();
            match read(&cut) {
                Ok(_) => panic!("a snapshot cut to {n} of {} bytes was read", bytes.len()),
                Err(err) => assert!(err.to_string().contains("cut.h5"), "{err}"),
            }
        }
    }

    #[test]
    fn read_rejects_types_sluice_never_writes() {
        let dir = TmpDir::new("foreign");
        let p = dir.0.join("f.h5");
        let mut fb = h5::FileBuilder::new();
        fb.create_dataset("ints").with_i32_data(&[1, 2, 3]);
        fs::write(&p, fb.finish().unwrap()).unwrap();
        let err = read(&p).unwrap_err().to_string();
        assert!(
            err.contains("/ints") && err.contains("64-bit floats"),
            "{err}"
        );

        let mut fb = h5::FileBuilder::new();
        fb.set_attr("small", h5::AttrValue::I32(3));
        fs::write(&p, fb.finish().unwrap()).unwrap();
        let err = read(&p).unwrap_err().to_string();
        assert!(err.contains("`small`"), "{err}");

        let mut fb = h5::FileBuilder::new();
        let mut g = fb.create_group("g");
        g.set_attr("note", h5::AttrValue::F64(1.0));
        g.create_dataset("v").with_f64_data(&[1.0]);
        fb.add_group(g.finish());
        fs::write(&p, fb.finish().unwrap()).unwrap();
        let err = read(&p).unwrap_err().to_string();
        assert!(err.contains("group `/g`") && err.contains("note"), "{err}");
    }

    #[test]
    fn undecodable_attribute_is_an_error_not_a_silent_drop() {
        // The backend's value map omits attributes it cannot decode (seen on
        // cut-off files before the length check existed); the type map still
        // lists them.
        let mut types = std::collections::HashMap::new();
        types.insert("units".to_string(), h5::make_f64_type());
        types.insert("t".to_string(), h5::make_f64_type());
        let mut values = std::collections::HashMap::new();
        values.insert("t".to_string(), h5::AttrValue::F64(1.0));
        let err = read_attrs(Ok(values.clone()), Ok(types.clone()), "dataset `/d`").unwrap_err();
        assert!(err.contains("units") && err.contains("`/d`"), "{err}");
        types.remove("units");
        assert_eq!(
            read_attrs(Ok(values), Ok(types), "x").unwrap(),
            vec![("t".to_string(), AttrValue::F64(1.0))]
        );
    }

    #[test]
    fn dot_component_in_target_path() {
        // A bare file name has an empty parent; the temp file then goes to ".".
        // Exercised through a path relative to the temp dir to avoid changing cwd.
        let dir = TmpDir::new("rel");
        let p = dir.0.join("./rel.h5");
        write_atomic(&p, &sample()).unwrap();
        assert_eq!(dir.entries(), ["rel.h5"]);
    }

    #[test]
    fn read_datasets_selects_paths_and_lists_the_present_ones_when_missing() {
        let dir = TmpDir::new("generic");
        let p = dir.0.join("g.h5");
        let snap = sample();
        write_atomic(&p, &snap).unwrap();
        let want = &snap.datasets[0];
        let got = read_datasets(&p, &[want.path.trim_start_matches('/')]).unwrap();
        assert_eq!(got.len(), 1);
        assert_eq!(got[0].path, want.path);
        let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
        assert_eq!(bits(&got[0].data), bits(&want.data));
        let err = read_datasets(&p, &["/no/such"]).unwrap_err().to_string();
        assert!(err.contains("no dataset `/no/such`"), "{err}");
        assert!(err.contains(&want.path), "{err}");
    }
}
