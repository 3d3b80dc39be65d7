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

/// A sweep directory named `name` whose summary (the sweep's layout, the
/// columns the picture reads) holds `members` members; its path.
fn sweep_of(name: &str, members: u32) -> std::path::PathBuf {
    let dir = scratch(name);
    std::fs::create_dir_all(&dir).unwrap();
    let mut csv = String::from(
        "member,updraft.peak_speed,status,flashes_intracloud,flashes_negative_ground,flashes_positive_ground,structure_at_peak_separation\n",
    );
    for m in 1..=members {
        csv.push_str(&format!(
            "{m},{},ok,{},0,0,normal_tripole\n",
            9 + m % 6,
            m % 40
        ));
    }
    std::fs::write(dir.join("summary.csv"), csv).unwrap();
    dir
}

/// The sweep picture of `dir` (PNG, and SVG with `svg`), with `args`: the
/// decoded PNG and the SVG text.
fn sweep_picture(dir: &std::path::Path, svg: bool, args: &[&str]) -> (image::DynamicImage, String) {
    let prefix = dir.with_extension("picture");
    let mut cmd = bin();
    cmd.arg("plot").arg(dir).arg("-o").arg(&prefix).args(args);
    if svg {
        cmd.arg("--svg");
    }
    succeed(&mut cmd);
    let png = image::open(prefix.with_extension("png")).expect("PNG decodes");
    let text = std::fs::read_to_string(prefix.with_extension("svg")).unwrap_or_default();
    (png, text)
}

#[test]
fn a_large_sweep_picture_grows_with_its_members() {
    // 200 members: the picture is tall enough for every member's label
    // (14 px a row) instead of drawing them over each other at the default
    // 1000 px (a readability rule, common practice).
    let (png, _) = sweep_picture(&sweep_of("large_sweep", 200), false, &[]);
    assert!(
        png.height() >= 200 * stormcharge::plot::SWEEP_ROW_PX,
        "{} px for 200 members",
        png.height()
    );
    // 2000 members would need 28,000 px: the picture stops at the largest
    // side the command draws and labels every k-th member (here every
    // fourth; every bar drawn), so a ten-thousand-member ensemble does not
    // ask for gigabytes.
    let (png, svg) = sweep_picture(&sweep_of("huge_sweep", 2000), true, &[]);
    assert_eq!(png.height(), stormcharge::plot::MAX_PICTURE_PX);
    let labelled: Vec<&str> = svg
        .lines()
        .filter(|l| {
            l.split_once(": ")
                .is_some_and(|(m, _)| m.parse::<u32>().is_ok())
        })
        .collect();
    assert!(labelled.iter().any(|l| l.starts_with("1: ")));
    assert!(!labelled.iter().any(|l| l.starts_with("2: ")));
    assert!(
        (400..1000).contains(&labelled.len()),
        "{} labels for 2000 members",
        labelled.len()
    );
    // A sweep of 6 keeps the requested size.
    let (png, _) = sweep_picture(
        &sweep_of("small_sweep", 6),
        false,
        &["--width", "1200", "--height", "900"],
    );
    assert_eq!((png.width(), png.height()), (1200, 900));
    // Its key names the classes and the flash kinds that occur, and no
    // other (a picture's colours need a key: common practice).
    let (_, svg) = sweep_picture(&sweep_of("keyed_sweep", 6), true, &[]);
    assert!(svg.contains("structure: normal_tripole"), "no class key");
    assert!(svg.contains("intracloud flashes"), "no flash key");
    assert!(!svg.contains("ground flashes"), "a kind that did not occur");
    // A member whose class changes at half the step (the numerics check
    // of `sweep.error_estimate`) says so in its label; one whose class
    // holds does not.
    let dir = scratch("numerics_sweep");
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(
        dir.join("summary.csv"),
        "member,updraft.peak_speed,status,flashes_intracloud,flashes_negative_ground,flashes_positive_ground,structure_at_peak_separation,structure_at_half_step,structure_at_half_spacing\n\
         1,10,ok,5,0,0,normal_tripole,normal_dipole,normal_dipole\n\
         2,12,ok,7,0,0,normal_tripole,normal_tripole,normal_tripole\n",
    )
    .unwrap();
    let (_, svg) = sweep_picture(&dir, true, &[]);
    assert!(svg.contains("1: 10 [normal_tripole] (normal_dipole at half the step and spacing)"));
    assert!(svg.lines().any(|l| l.trim() == "2: 12 [normal_tripole]"));
}
