//! Commands on odd output files: no records, a crafted stored
//! configuration, missing values. Files are made in this process with the
//! NetCDF library and closed before the program reads them; the child
//! processes do not use HDF5 file locks (a lock held through a descriptor
//! another test's child inherited would otherwise block them).

mod common;
use common::*;

use std::path::Path;
use stormcharge::output::netcdf_writer::{partial_path, NetcdfWriter};
use stormcharge::output::reader::CONFIG_ATTRIBUTE;
use stormcharge::output::Observer;
use stormcharge::setup::config::DEMO_TOML;
use stormcharge::setup::experiment::Experiment;

fn child() -> std::process::Command {
    let mut c = bin();
    c.env("HDF5_USE_FILE_LOCKING", "FALSE");
    c
}

#[test]
fn analyze_and_plot_refuse_a_file_without_records() {
    // Item 9: a run stopped right after writing its header leaves a file
    // with dimensions and attributes but no time record. analyze and plot
    // used to panic (exit 101); now they stop with exit 1 and say why.
    let exp = Experiment::from_text(DEMO_TOML, "demo", &[], Path::new(".")).unwrap();
    let out = scratch("header_only.nc");
    {
        let mut w = NetcdfWriter::new(&out, "test");
        w.begin(&exp).unwrap();
    }
    let partial = partial_path(&out);
    for cmd in ["analyze", "plot"] {
        let o = child().arg(cmd).arg(&partial).output().unwrap();
        assert_eq!(o.status.code(), Some(1), "{cmd}");
        let msg = String::from_utf8_lossy(&o.stderr);
        assert!(msg.contains("no time records"), "{cmd}: {msg}");
    }
}

#[test]
fn missing_heights_are_marked_and_crafted_replays_refused() {
    // Item 11: field_ratio_height_* holds NaN where a criterion has no
    // maximum; the variable says so with the CF _FillValue. A stored
    // configuration that names a file (stormcharge never stores one) is not
    // replayed, and nothing of the named file is printed.
    let out = scratch("fill.nc");
    succeed(
        child()
            .args(["run", "--quiet", "--set", "time.duration=120", "-o"])
            .arg(&out),
    );
    let text = {
        let f = netcdf::open(&out).unwrap();
        let v = f
            .variable("field_ratio_height_conventional_breakdown")
            .unwrap();
        let fill = match v.attribute("_FillValue").unwrap().value().unwrap() {
            netcdf::AttributeValue::Double(x) => x,
            other => panic!("{other:?}"),
        };
        assert!(fill.is_nan());
        text_attr(&f, CONFIG_ATTRIBUTE)
    };
    let crafted = scratch("crafted.nc");
    std::fs::copy(&out, &crafted).unwrap();
    let secret = scratch("secret.csv");
    std::fs::write(&secret, "TOPSECRET\n").unwrap();
    {
        let mut f = netcdf::append(&crafted).unwrap();
        let edited = text.replace(
            "[atmosphere.sounding]\n",
            &format!("[atmosphere.sounding]\nfile = \"{}\"\n", secret.display()),
        );
        f.add_attribute(CONFIG_ATTRIBUTE, edited).unwrap();
    }
    let o = child()
        .args(["run", "--quiet", "--replay"])
        .arg(&crafted)
        .arg("-o")
        .arg(scratch("crafted_again.nc"))
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    let msg = String::from_utf8_lossy(&o.stderr);
    assert!(
        msg.contains("was edited") && !msg.contains("TOPSECRET"),
        "{msg}"
    );
}
