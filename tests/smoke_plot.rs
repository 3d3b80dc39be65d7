//! The plot command writes a PNG that decodes at the requested size and an
//! SVG document of that size, for the demo output; `analyze` finds the
//! charge regions of the same output.

mod common;
use common::*;

#[test]
fn plot_writes_png_and_svg() {
    let out = scratch("plot_demo.nc");
    succeed(bin().args(["run", "--quiet", "-o"]).arg(&out));
    let prefix = scratch("plot_demo_pictures");
    succeed(bin().arg("plot").arg(&out).arg("-o").arg(&prefix).args([
        "--width", "1200", "--height", "900", "--time", "1800", "--svg",
    ]));
    let png = image::open(prefix.with_extension("png")).expect("PNG decodes");
    assert_eq!((png.width(), png.height()), (1200, 900));
    // Not blank: the diverging colour scale puts saturated reds and blues in.
    let rgb = png.to_rgb8();
    assert!(rgb.pixels().any(|p| p[0] > 180 && p[2] < 120));
    assert!(rgb.pixels().any(|p| p[2] > 150 && p[0] < 100));
    let svg = std::fs::read_to_string(prefix.with_extension("svg")).unwrap();
    assert!(svg.contains("<svg") && svg.trim_end().ends_with("</svg>"));
    assert!(svg.contains("width=\"1200\"") && svg.contains("height=\"900\""));
    // The default overview: time in minutes, colour bars named by their
    // quantity, the flash, profile and potential panels (the demo flashes,
    // intracloud only, so the legend lists that kind alone).
    for text in [
        "time (min)",
        "charge density (nC m-3)",
        "E_z (kV/m, positive up)",
        "potential (MV; ground 0)",
        "hydrometeors at",
        "flash rate",
        "cumulative flashes by kind",
        "intracloud flash",
    ] {
        assert!(svg.contains(text), "{text}");
    }
    assert!(!svg.contains(">-0<") && !svg.contains(">-0.0<"));
    assert!(
        !svg.contains("negative ground flash"),
        "the legend lists a kind that did not occur"
    );
    // Chosen panels only, with a fixed colour limit.
    let chosen = scratch("plot_demo_carriers");
    succeed(bin().arg("plot").arg(&out).arg("-o").arg(&chosen).args([
        "--panels",
        "carriers",
        "--charge-limit",
        "0.5",
        "--svg",
    ]));
    let svg = std::fs::read_to_string(chosen.with_extension("svg")).unwrap();
    assert!(svg.contains("charge on graupel") && !svg.contains("flash rate"));
    let o = bin()
        .arg("plot")
        .arg(&out)
        .args(["--panels", "charge,bogus"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("unknown panel"));
    // The analysis of the same output finds the demo's charge regions at its
    // largest charge separation: the normal tripole, a negative region with
    // positive charge above and below it (docs/charging.md), and its
    // flashes.
    let o = bin().arg("analyze").arg(&out).output().unwrap();
    assert_eq!(o.status.code(), Some(0));
    let text = String::from_utf8_lossy(&o.stdout);
    let signs: Vec<&str> = text
        .lines()
        .filter_map(|l| l.split_whitespace().next())
        .filter(|w| *w == "positive" || *w == "negative")
        .collect();
    assert_eq!(signs, ["positive", "negative", "positive"], "{text}");
    assert!(
        text.contains("normal_tripole") && text.contains("intracloud"),
        "{text}"
    );
    // SVG only when asked; a missing directory is named, with the reason.
    let plain = scratch("plot_demo_png_only");
    succeed(bin().arg("plot").arg(&out).arg("-o").arg(&plain));
    assert!(plain.with_extension("png").exists() && !plain.with_extension("svg").exists());
    let o = bin()
        .arg("plot")
        .arg(&out)
        .arg("-o")
        .arg(scratch("no_such_dir").join("pic"))
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("no_such_dir") && err.contains("does not exist"),
        "{err}"
    );
    assert!(!err.contains("Os {"), "{err}");
    // Bad size: a usage error naming the option.
    let o = bin()
        .arg("plot")
        .arg(&out)
        .args(["--width", "10"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
}
