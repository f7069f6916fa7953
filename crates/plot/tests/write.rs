//! The plot files are really written: the SVG holds the labels and one polyline per series,
//! the PNG decodes (png crate) with the figure's size, and the auto log rule follows the data.

use sluice_plot::{resolve_log, write, Figure, Panel, PlotError, Scale, Series, Style};

fn figure() -> Figure {
    let x: Vec<f64> = (0..50).map(|i| i as f64 * 0.1).collect();
    let p1 = Panel {
        title: "density".into(),
        x_label: "x [cm]".into(),
        y_label: "density [g cm^-3]".into(),
        series: vec![
            Series {
                label: "t = 0 s".into(),
                x: x.clone(),
                y: x.iter().map(|v| 1.0 + v).collect(),
                style: Style::Line,
            },
            Series {
                label: "t = 2 s".into(),
                x: x.clone(),
                y: x.iter().map(|v| 2.0 - 0.1 * v).collect(),
                style: Style::Dashed,
            },
        ],
        ..Default::default()
    };
    let p2 = Panel {
        title: "cr_pressure".into(),
        x_label: "x [cm]".into(),
        y_label: "cr_pressure [erg cm^-3]".into(),
        series: vec![Series {
            label: "t = 0 s".into(),
            x: x.clone(),
            y: x.iter().map(|v| (-v * v).exp() + 1e-6).collect(),
            style: Style::Points,
        }],
        ..Default::default()
    };
    Figure::new("Sluice test figure", vec![p1, p2])
}

#[test]
fn svg_contains_labels_and_series() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("f.svg");
    write(&figure(), &path).unwrap();
    let svg = std::fs::read_to_string(&path).unwrap();
    for text in [
        "density [g cm^-3]",
        "cr_pressure [erg cm^-3] (log)",
        "t = 0 s",
        "t = 2 s",
        "Sluice test figure",
    ] {
        assert!(svg.contains(text), "SVG lacks `{text}`");
    }
    // Two line series in panel 1 (the legend adds one path per labelled series too).
    assert!(svg.matches("<polyline").count() >= 2);
    assert!(svg.matches("<circle").count() >= 50);
    // No temporary file left beside it.
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
}

#[test]
fn png_decodes_with_figure_size_and_has_text_pixels() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("f.png");
    let fig = figure();
    write(&fig, &path).unwrap();
    let decoder = png::Decoder::new(std::fs::File::open(&path).unwrap());
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).unwrap();
    assert_eq!((info.width, info.height), fig.size());
    // Not a blank image: a good share of non-white pixels (axes, lines, text).
    let px = &buf[..info.buffer_size()];
    let dark = px.chunks(3).filter(|c| c.iter().all(|&v| v < 100)).count();
    assert!(dark > 2000, "only {dark} dark pixels");
}

#[test]
fn auto_log_follows_the_decades() {
    assert!(resolve_log(Scale::Auto, [1e-3, 1.0, 10.0].into_iter()));
    assert!(!resolve_log(Scale::Auto, [1.0, 100.0].into_iter()));
    assert!(!resolve_log(Scale::Auto, [-1.0, 1e6].into_iter()));
    assert!(resolve_log(Scale::Log, [1.0, 2.0].into_iter()));
    assert!(!resolve_log(Scale::Linear, [1e-9, 1e9].into_iter()));
}

#[test]
fn bad_extension_and_lengths_are_named() {
    let dir = tempfile::tempdir().unwrap();
    let e = write(&figure(), &dir.path().join("f.pdf")).unwrap_err();
    assert!(matches!(e, PlotError::Extension(_)), "{e}");
    let mut fig = figure();
    fig.panels[0].series[0].y.pop();
    let e = write(&fig, &dir.path().join("f.svg")).unwrap_err();
    assert!(e.to_string().contains("t = 0 s"), "{e}");
}
