//! Outside check of Sluice snapshots: files written by `sluice_driver::snapshot`
//! are opened with h5py, which bundles the reference HDF5 C library of The HDF
//! Group, by `tests/read_snapshot.py`. h5py must be installed (`bash tests/run.sh`
//! installs it); without it these tests fail rather than skip.

use std::path::{Path, PathBuf};
use std::process::Command;

use serde_json::{json, Map, Value};
use sluice_driver::snapshot::{self, AttrValue, Dataset, Snapshot};

const SCRIPT: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/read_snapshot.py");

/// Fails the test (never skips) when h5py cannot be imported.
fn require_h5py() {
    let out = Command::new("python3")
        .args(["-c", "import h5py, numpy"])
        .output();
    match out {
        Ok(o) if o.status.success() => {}
        Ok(o) => panic!(
            "python3 cannot import h5py ({}). Run the tests with `bash tests/run.sh`, \
             which installs h5py, or `python3 -m pip install h5py`.",
            String::from_utf8_lossy(&o.stderr).trim()
        ),
        Err(e) => panic!(
            "cannot run python3 ({e}). Install Python 3 and run `bash tests/run.sh`, \
             which installs h5py."
        ),
    }
}

/// A fresh directory under the system temp dir, removed on drop.
struct TmpDir(PathBuf);

impl TmpDir {
    fn new(tag: &str) -> Self {
        let p = std::env::temp_dir().join(format!("sluice-h5py-{}-{tag}", std::process::id()));
        let _ = std::fs::remove_dir_all(&p);
        std::fs::create_dir_all(&p).unwrap();
        TmpDir(p)
    }
}

impl Drop for TmpDir {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

/// Runs the h5py script; returns (success, stdout + stderr).
fn run_script(args: &[&Path]) -> (bool, String) {
    let out = Command::new("python3")
        .arg(SCRIPT)
        .args(args)
        .output()
        .expect("run python3 tests/read_snapshot.py");
    let text = format!(
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    (out.status.success(), text)
}

fn attr_json(v: &AttrValue) -> Value {
    match v {
        AttrValue::F64(x) => json!({"type": "f64", "value": x.to_bits()}),
        AttrValue::I64(x) => json!({"type": "i64", "value": x}),
        AttrValue::Str(s) => json!({"type": "str", "value": s}),
        AttrValue::F64s(xs) => {
            json!({"type": "f64s", "value": xs.iter().map(|x| x.to_bits()).collect::<Vec<_>>()})
        }
    }
}

fn attrs_json(attrs: &[(String, AttrValue)]) -> Value {
    Value::Object(
        attrs
            .iter()
            .map(|(n, v)| (n.clone(), attr_json(v)))
            .collect::<Map<_, _>>(),
    )
}

/// The expectations file for `read_snapshot.py`: everything in `snap`, bit-exact.
fn expectations(snap: &Snapshot) -> Value {
    let datasets: Map<String, Value> = snap
        .datasets
        .iter()
        .map(|d| {
            let bits: Vec<u64> = d.data.iter().map(|x| x.to_bits()).collect();
            (
                d.path.clone(),
                json!({"bits": bits, "attrs": attrs_json(&d.attrs)}),
            )
        })
        .collect();
    json!({
        "root_attrs": attrs_json(&snap.attrs),
        "datasets": datasets,
        "exact_members": true,
    })
}

/// f64 values that catch a lossy path: signed zero, subnormals, extremes,
/// infinities, a NaN with a payload, values that need 17 significant digits.
fn awkward() -> Vec<f64> {
    vec![
        0.0,
        -0.0,
        f64::from_bits(1),
        f64::MIN_POSITIVE / 3.0,
        f64::MAX,
        f64::MIN,
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::from_bits(0x7ff8_0000_dead_beef),
        0.1 + 0.2,
        std::f64::consts::PI,
        1.0e-300,
    ]
}

/// A snapshot shaped like Sluice output, with every attribute kind, nesting,
/// an empty dataset, Unicode and a deck-sized (~20 kB) string.
fn sample() -> Snapshot {
    let n = 512;
    let x: Vec<f64> = (0..n).map(|i| (i as f64 + 0.5) / n as f64).collect();
    let rho: Vec<f64> = x
        .iter()
        .map(|&x| if x < 0.5 { 1.0 } else { 0.125 })
        .collect();
    let mut deck = String::from("# Sluice deck — ünïcode ✓\n");
    let mut i = 0;
    while deck.len() < 20_000 {
        deck.push_str(&format!("[block_{i}]\nvalue = {}\n\n", i as f64 / 3.0));
        i += 1;
    }
    Snapshot {
        attrs: vec![
            ("time".into(), AttrValue::F64(3.0e12)),
            ("step".into(), AttrValue::I64(1234)),
            ("deck".into(), AttrValue::Str(deck)),
            ("label".into(), AttrValue::Str("Stoß ρ 宇宙線 🌌".into())),
            ("domain".into(), AttrValue::F64s(vec![0.0, 3.0857e18])),
            ("awkward".into(), AttrValue::F64s(awkward())),
            ("no_values".into(), AttrValue::F64s(vec![])),
            ("blank".into(), AttrValue::Str(String::new())),
        ],
        datasets: vec![
            Dataset::new("/grid/x", x).with_attr("units", AttrValue::Str("cm".into())),
            Dataset::new("/fields/density", rho)
                .with_attr("units", AttrValue::Str("g cm^-3".into()))
                .with_attr("floor", AttrValue::F64(1e-30)),
            Dataset::new("/fields/cr/awkward", awkward())
                .with_attr("units", AttrValue::Str("erg cm⁻³".into()))
                .with_attr("index", AttrValue::I64(-7)),
            Dataset::new("/fields/empty", vec![]).with_attr("units", AttrValue::Str("1".into())),
        ],
    }
}

#[test]
fn h5py_reads_module_snapshot_bit_exact() {
    require_h5py();
    let dir = TmpDir::new("exact");
    let file = dir.0.join("sample.h5");
    let snap = sample();
    snapshot::write_atomic(&file, &snap).unwrap();
    let want = dir.0.join("expect.json");
    std::fs::write(&want, expectations(&snap).to_string()).unwrap();
    let (ok, text) = run_script(&[&file, &want]);
    assert!(ok, "h5py check failed:\n{text}");
    assert!(text.contains("OK"), "{text}");
}

/// Negative control: the same check must fail on a single flipped bit, a
/// missing `units`, a string expected where a number is stored, and an extra
/// dataset, so the test above cannot pass vacuously.
#[test]
fn h5py_check_detects_wrong_expectations() {
    require_h5py();
    let dir = TmpDir::new("negative");
    let file = dir.0.join("sample.h5");
    let snap = sample();
    snapshot::write_atomic(&file, &snap).unwrap();
    let want = dir.0.join("expect.json");

    let mut e = expectations(&snap);
    let bits = &mut e["datasets"]["/fields/density"]["bits"][3];
    *bits = json!(bits.as_u64().unwrap() ^ 1);
    std::fs::write(&want, e.to_string()).unwrap();
    let (ok, text) = run_script(&[&file, &want]);
    assert!(!ok && text.contains("/fields/density"), "{text}");

    let mut e = expectations(&snap);
    e["root_attrs"]["step"] = json!({"type": "str", "value": "1234"});
    std::fs::write(&want, e.to_string()).unwrap();
    let (ok, text) = run_script(&[&file, &want]);
    assert!(!ok && text.contains("`step`"), "{text}");

    let mut e = expectations(&snap);
    e["datasets"].as_object_mut().unwrap().remove("/grid/x");
    std::fs::write(&want, e.to_string()).unwrap();
    let (ok, text) = run_script(&[&file, &want]);
    assert!(!ok && text.contains("unexpected datasets"), "{text}");

    // A dataset without `units` fails the structure check.
    let mut bare = snap.clone();
    bare.datasets.push(Dataset::new("/fields/bare", vec![1.0]));
    let bare_file = dir.0.join("bare.h5");
    snapshot::write_atomic(&bare_file, &bare).unwrap();
    let (ok, text) = run_script(&[&bare_file, Path::new("--structure")]);
    assert!(!ok && text.contains("/fields/bare"), "{text}");
}

/// h5py's view of the file, dumped as JSON, equals what Sluice's own reader
/// returns: the two independent readers agree on every bit.
#[test]
fn h5py_and_sluice_reader_agree() {
    require_h5py();
    let dir = TmpDir::new("agree");
    let file = dir.0.join("sample.h5");
    snapshot::write_atomic(&file, &sample()).unwrap();
    let dump = dir.0.join("dump.json");
    let (ok, text) = run_script(&[&file, Path::new("--structure"), Path::new("--dump"), &dump]);
    assert!(ok, "{text}");
    let seen: Value = serde_json::from_str(&std::fs::read_to_string(&dump).unwrap()).unwrap();
    let ours = snapshot::read(&file).unwrap();
    let mut expect = expectations(&ours);
    expect["groups_with_attrs"] = json!([]);
    expect.as_object_mut().unwrap().remove("exact_members");
    assert_eq!(seen, expect);
}

/// The reverse direction: a file written by h5py (reference HDF5 C library,
/// both its default and its newest file-format versions) is read by Sluice's
/// reader with the same values, e.g. a hand-made initial condition.
#[test]
fn sluice_reader_reads_h5py_files() {
    require_h5py();
    let dir = TmpDir::new("reverse");
    for libver in ["earliest", "latest"] {
        let file = dir.0.join(format!("made_by_h5py_{libver}.h5"));
        let code = format!(
            r#"
import h5py, numpy as np
with h5py.File({file:?}, "w", libver="{libver}") as f:
    f.attrs["time"] = np.float64(2.5)
    f.attrs["step"] = np.int64(-3)
    f.attrs["label"] = "Stoß ρ"
    f.attrs["domain"] = np.array([0.0, 1.0])
    d = f.create_dataset("fields/density", data=np.array([1.0, -0.0, 5e-324, 0.1]))
    d.attrs["units"] = "g cm^-3"
    f.create_dataset("x", data=np.arange(4, dtype=np.float64))
"#,
            file = file.display().to_string()
        );
        let out = Command::new("python3")
            .args(["-c", &code])
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        let snap = snapshot::read(&file).unwrap_or_else(|e| panic!("libver={libver}: {e}"));
        assert_eq!(snap.attr("time"), Some(&AttrValue::F64(2.5)), "{libver}");
        assert_eq!(snap.attr("step"), Some(&AttrValue::I64(-3)), "{libver}");
        assert_eq!(
            snap.attr("label").and_then(AttrValue::as_str),
            Some("Stoß ρ")
        );
        assert_eq!(snap.attr("domain"), Some(&AttrValue::F64s(vec![0.0, 1.0])));
        let rho = snap.dataset("/fields/density").expect("density");
        let bits: Vec<u64> = rho.data.iter().map(|x| x.to_bits()).collect();
        let want: Vec<u64> = [1.0, -0.0, 5e-324, 0.1]
            .iter()
            .map(|x: &f64| x.to_bits())
            .collect();
        assert_eq!(bits, want, "{libver}");
        assert_eq!(
            rho.attr("units").and_then(AttrValue::as_str),
            Some("g cm^-3")
        );
        assert_eq!(snap.dataset("/x").unwrap().data, vec![0.0, 1.0, 2.0, 3.0]);
    }
}

/// The real program: `sluice run problems/sod.toml` writes snapshots that h5py
/// opens, with root attributes, every dataset a 1D float64 array carrying a
/// `units` string, and h5py's view equal bit for bit to Sluice's own reader.
/// Field names are discovered, not assumed.
#[test]
fn sluice_run_snapshots_read_by_h5py() {
    require_h5py();
    let deck = Path::new(env!("CARGO_MANIFEST_DIR")).join("problems/sod.toml");
    assert!(deck.exists(), "missing deck {}", deck.display());
    let dir = TmpDir::new("sod");
    let out_dir = dir.0.join("out");
    let out = Command::new(env!("CARGO_BIN_EXE_sluice"))
        .arg("run")
        .arg(&deck)
        .arg("--out")
        .arg(&out_dir)
        .arg("--quiet")
        .output()
        .expect("run the sluice binary");
    assert!(
        out.status.success(),
        "sluice run failed ({}):\n{}{}",
        out.status,
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    let mut files: Vec<PathBuf> = std::fs::read_dir(&out_dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "h5"))
        .collect();
    files.sort();
    assert!(
        !files.is_empty(),
        "no .h5 snapshot in {}",
        out_dir.display()
    );
    // No temporary file of the atomic writer may be left behind.
    let leftovers: Vec<_> = std::fs::read_dir(&out_dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.contains(".tmp-"))
        .collect();
    assert!(leftovers.is_empty(), "temporary files left: {leftovers:?}");

    let mut check = vec![files[0].clone()];
    if files.len() > 1 {
        check.push(files[files.len() - 1].clone());
    }
    for file in check {
        let dump = dir.0.join("dump.json");
        let (ok, text) = run_script(&[&file, Path::new("--structure"), Path::new("--dump"), &dump]);
        assert!(
            ok,
            "h5py structure check of {} failed:\n{text}",
            file.display()
        );
        let seen: Value = serde_json::from_str(&std::fs::read_to_string(&dump).unwrap()).unwrap();
        let ours = snapshot::read(&file).unwrap_or_else(|e| panic!("{e}"));
        assert!(!ours.attrs.is_empty() && !ours.datasets.is_empty());
        let mut expect = expectations(&ours);
        expect["groups_with_attrs"] = json!([]);
        expect.as_object_mut().unwrap().remove("exact_members");
        assert!(
            seen == expect,
            "h5py and snapshot::read disagree on {}",
            file.display()
        );
    }
}
