//! Sweeps: determinism across thread counts, sharding and merging, failed
//! members. Uses the prescribed-charge flash configuration (fast: no
//! microphysics).

mod common;
use common::*;

const SWEEP: &str = r#"
[sweep]
combine = "product"
[[sweep.parameters]]
key = "discharge.target_fraction"
values = [0.3, 0.5]
[[sweep.parameters]]
key = "column.radius"
values = [2000.0, 3000.0, 2500]
"#;

fn config_with_sweep(extra: &str) -> std::path::PathBuf {
    let base = std::fs::read_to_string(repo("configs/tripole_flashes.toml")).unwrap();
    let text = base.replace("duration = 10800.0", "duration = 3600.0") + extra;
    // Named by the text's hash: tests running side by side with different
    // configurations of the same length must not share a file.
    let p = scratch(&format!(
        "sweep_{}.toml",
        stormcharge::sweep::fingerprint(&text)
    ));
    std::fs::write(&p, text).unwrap();
    p
}

fn sweep(config: &std::path::Path, dir: &str, args: &[&str]) -> std::process::Output {
    let out = scratch(dir);
    bin()
        .args(["sweep", "--quiet"])
        .arg(config)
        .arg("-o")
        .arg(&out)
        .args(args)
        .output()
        .unwrap()
}

/// [`sweep`] that must succeed (its standard error shown when it does not).
fn sweep_ok(config: &std::path::Path, dir: &str, args: &[&str]) {
    let o = sweep(config, dir, args);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
}

fn read(dir: &str, name: &str) -> String {
    std::fs::read_to_string(scratch(dir).join(name)).unwrap()
}

fn data(dir: &str, member: usize) -> Vec<(String, Vec<u64>)> {
    let f = netcdf::open(scratch(dir).join(format!("member_{member:04}.nc"))).unwrap();
    f.variables()
        .map(|v| {
            let vals: Vec<f64> = match v.vartype() {
                netcdf::types::NcVariableType::Int(_) => v
                    .get_values::<i32, _>(..)
                    .unwrap()
                    .into_iter()
                    .map(f64::from)
                    .collect(),
                _ => v.get_values::<f64, _>(..).unwrap(),
            };
            (v.name(), vals.into_iter().map(f64::to_bits).collect())
        })
        .collect()
}

#[test]
fn thread_count_does_not_change_results() {
    let cfg = config_with_sweep(SWEEP);
    for (dir, threads) in [("one_thread", "1"), ("two_threads", "2")] {
        sweep_ok(&cfg, dir, &["--threads", threads]);
    }
    let a = read("one_thread", "summary.csv");
    assert_eq!(a, read("two_threads", "summary.csv"));
    assert_eq!(a.lines().count(), 1 + 6, "{a}");
    assert!(a.lines().nth(1).unwrap().starts_with("1,0.3,2000.0,ok,"));
    for m in 1..=6 {
        assert_eq!(data("one_thread", m), data("two_threads", m), "member {m}");
    }
    // The NetCDF summary holds the same members and outcomes.
    let f = netcdf::open(scratch("one_thread").join("summary.nc")).unwrap();
    let ic: Vec<f64> = f
        .variable("flashes_intracloud")
        .unwrap()
        .get_values(..)
        .unwrap();
    let csv_ic: Vec<f64> = a
        .lines()
        .skip(1)
        .map(|l| l.split(',').nth(4).unwrap().parse().unwrap())
        .collect();
    assert_eq!(ic, csv_ic);
    assert!(ic.iter().all(|&n| n > 0.0));
    // Text outcomes (written one variable per call) read back as the CSV
    // has them, member by member; no member failed, so every error is empty.
    let header: Vec<&str> = a.lines().next().unwrap().split(',').collect();
    let column = header
        .iter()
        .position(|h| *h == "structure_at_peak_separation")
        .unwrap();
    let structure = f.variable("structure").unwrap();
    let error = f.variable("error").unwrap();
    for (m, line) in a.lines().skip(1).enumerate() {
        let word = line.split(',').nth(column).unwrap();
        assert!(!word.is_empty());
        assert_eq!(structure.get_string([m]).unwrap(), word);
        assert_eq!(error.get_string([m]).unwrap(), "");
    }
}

#[test]
fn shards_merge_into_the_unsharded_summary() {
    let cfg = config_with_sweep(SWEEP);
    let o = sweep(&cfg, "whole", &[]);
    assert_eq!(o.status.code(), Some(0));
    for k in 1..=3 {
        sweep_ok(&cfg, "sharded", &["--shard", &format!("{k}/3")]);
    }
    succeed(bin().arg("sweep-merge").arg(scratch("sharded")));
    assert_eq!(read("sharded", "summary.csv"), read("whole", "summary.csv"));
    // The merge writes the same files as the unsharded sweep, NetCDF included.
    let dump = |dir: &str| {
        let f = netcdf::open(scratch(dir).join("summary.nc")).unwrap();
        let mut names: Vec<String> = f.variables().map(|v| v.name()).collect();
        names.sort();
        let peak: Vec<f64> = f.variable("peak_field").unwrap().get_values(..).unwrap();
        (names, peak.iter().map(|x| x.to_bits()).collect::<Vec<_>>())
    };
    assert_eq!(dump("sharded"), dump("whole"));
    // A missing shard is an error naming it.
    std::fs::remove_file(scratch("sharded").join("summary_shard_2_of_3.csv")).unwrap();
    let o = bin()
        .arg("sweep-merge")
        .arg(scratch("sharded"))
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("shard 2 of 3 is missing"));
    let o = sweep(&cfg, "bad_shard", &["--shard", "4/3"]);
    assert_eq!(o.status.code(), Some(2));
}

#[test]
fn a_failing_member_does_not_stop_the_others() {
    // Member 2 is a valid configuration that fails while it runs: with
    // discharges off and a conventional-breakdown field of 100 kV/m the
    // growing tripole's field passes breakdown and the run guard stops it.
    let cfg = config_with_sweep(
        r#"
[sweep]
combine = "zip"
[[sweep.parameters]]
key = "discharge.enabled"
values = [true, false, true]
[[sweep.parameters]]
key = "breakdown.conventional_field"
values = [3.0e6, 1.0e5, 3.0e6]
"#,
    );
    // The others run and the summary is written; the exit code says that
    // a member failed (3, docs/sweeps.md), and the failed row has empty
    // outcome fields, not zeros.
    let o = sweep(&cfg, "with_failure", &[]);
    assert_eq!(
        o.status.code(),
        Some(3),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert!(String::from_utf8_lossy(&o.stderr).contains("1 of 3 sweep members failed"));
    let s = read("with_failure", "summary.csv");
    let rows: Vec<&str> = s.lines().skip(1).collect();
    assert!(rows[0].contains(",ok,") && rows[2].contains(",ok,"));
    assert!(
        rows[1].contains(",failed,,,,,,,,,") && rows[1].contains("conventional breakdown"),
        "{}",
        rows[1]
    );
    assert!(scratch("with_failure").join("member_0003.nc").exists());
    assert!(!scratch("with_failure").join("member_0002.nc").exists());
}

#[test]
fn all_members_failing_is_not_success() {
    let cfg = config_with_sweep(
        r#"
[discharge]
enabled = false
[sweep]
[[sweep.parameters]]
key = "breakdown.conventional_field"
values = [1.0e5, 2.0e5]
"#,
    );
    let o = sweep(&cfg, "all_failed", &[]);
    assert_eq!(o.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&o.stderr).contains("2 of 2 sweep members failed"));
}

#[test]
fn a_key_swept_twice_is_refused_before_anything_runs() {
    // Two blocks of one key: a usage error naming both blocks, exit 2,
    // nothing created (it ran every member and then failed writing the
    // summary, whose two columns of one name NetCDF refuses).
    let cfg = config_with_sweep(
        r#"
[sweep]
[[sweep.parameters]]
key = "updraft.peak_speed"
values = [8.0]
[[sweep.parameters]]
key = "updraft.peak_speed"
values = [9.0]
"#,
    );
    let o = sweep(&cfg, "twice", &[]);
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("sweep.parameters[2].key"), "{err}");
    assert!(
        err.contains("already swept by sweep.parameters[1]"),
        "{err}"
    );
    // The line of the second block's key (errors name the file line:
    // the project's rule for configuration errors).
    let text = std::fs::read_to_string(&cfg).unwrap();
    let line = text
        .lines()
        .enumerate()
        .filter(|(_, l)| l.trim() == "key = \"updraft.peak_speed\"")
        .nth(1)
        .unwrap()
        .0
        + 1;
    assert!(err.contains(&format!("(line {line})")), "{err}");
    assert!(!scratch("twice").exists());
}

#[test]
fn zipped_lists_of_different_lengths_are_refused_with_their_line() {
    // combine = "zip" pairs the lists value by value: a shorter list is a
    // usage error naming its key, its length, the length it needs and its
    // line, exit 2, before anything runs.
    let cfg = config_with_sweep(
        r#"
[sweep]
combine = "zip"
[[sweep.parameters]]
key = "updraft.peak_speed"
values = [8.0, 9.0]
[[sweep.parameters]]
key = "column.radius"
values = [2000.0]
"#,
    );
    let o = sweep(&cfg, "zip_lengths", &[]);
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    let text = std::fs::read_to_string(&cfg).unwrap();
    let line = text
        .lines()
        .position(|l| l.trim() == "values = [2000.0]")
        .unwrap()
        + 1;
    for part in [
        "sweep.parameters[2].values",
        "a list of 1 value",
        "a list of 2 values",
        &format!("(line {line})"),
    ] {
        assert!(err.contains(part), "missing {part:?} in {err}");
    }
    assert!(!scratch("zip_lengths").exists());
}

#[test]
fn members_with_bad_values_stop_the_sweep_before_anything_runs() {
    // Every member is resolved first: out-of-range values are reported
    // together, member by member, with exit 2, and nothing is created.
    let cfg = config_with_sweep(
        r#"
[sweep]
combine = "zip"
[[sweep.parameters]]
key = "column.radius"
values = [2000.0, -5.0, 3000.0, -7.0]
"#,
    );
    let o = sweep(&cfg, "bad_values", &[]);
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("member 2 (column.radius=-5.0)"), "{err}");
    assert!(err.contains("member 4 (column.radius=-7.0)"), "{err}");
    assert!(err.contains("2 members fail; nothing was run"), "{err}");
    assert!(!scratch("bad_values").exists());
}

#[test]
fn merge_refuses_truncated_duplicate_and_foreign_shards() {
    let cfg = config_with_sweep(SWEEP);
    for k in 1..=2 {
        let o = sweep(&cfg, "merge_checks", &["--shard", &format!("{k}/2")]);
        assert_eq!(o.status.code(), Some(0));
    }
    let dir = scratch("merge_checks");
    let merge = || bin().arg("sweep-merge").arg(&dir).output().unwrap();
    assert_eq!(merge().status.code(), Some(0));
    // Truncated: a row missing from shard 1.
    let s1 = dir.join("summary_shard_1_of_2.csv");
    let good = std::fs::read_to_string(&s1).unwrap();
    let cut: Vec<&str> = good.lines().collect();
    std::fs::write(&s1, cut[..cut.len() - 1].join("\n") + "\n").unwrap();
    let o = merge();
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("truncated"));
    std::fs::write(&s1, &good).unwrap();
    // Duplicate: a third summary claiming to be a shard of 2.
    std::fs::copy(&s1, dir.join("summary_shard_3_of_2.csv")).unwrap();
    std::fs::copy(
        dir.join("summary_shard_1_of_2.meta"),
        dir.join("summary_shard_3_of_2.meta"),
    )
    .unwrap();
    assert_eq!(merge().status.code(), Some(2));
    std::fs::remove_file(dir.join("summary_shard_3_of_2.csv")).unwrap();
    std::fs::remove_file(dir.join("summary_shard_3_of_2.meta")).unwrap();
    // Foreign: shard 2 of another configuration.
    let other = config_with_sweep(&SWEEP.replace("0.3, 0.5", "0.4, 0.6"));
    let o = sweep(&other, "merge_other", &["--shard", "2/2"]);
    assert_eq!(o.status.code(), Some(0));
    for ext in ["csv", "meta"] {
        std::fs::copy(
            scratch("merge_other").join(format!("summary_shard_2_of_2.{ext}")),
            dir.join(format!("summary_shard_2_of_2.{ext}")),
        )
        .unwrap();
    }
    let o = merge();
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("another sweep"));
}

#[test]
fn a_used_directory_is_refused_or_cleaned() {
    // A bigger sweep, then a smaller one into the same directory: refused
    // (exit 2) because the old members would be mixed with the new; with
    // --overwrite the stale members are removed.
    let big = config_with_sweep(SWEEP);
    assert_eq!(sweep(&big, "reused", &[]).status.code(), Some(0));
    let small = config_with_sweep(
        r#"
[sweep]
[[sweep.parameters]]
key = "discharge.target_fraction"
values = [0.3, 0.5]
"#,
    );
    let o = sweep(&small, "reused", &[]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("earlier sweep"));
    assert_eq!(
        sweep(&small, "reused", &["--overwrite"]).status.code(),
        Some(0)
    );
    let dir = scratch("reused");
    assert!(dir.join("member_0002.nc").exists());
    assert!(!dir.join("member_0003.nc").exists());
    assert_eq!(read("reused", "summary.csv").lines().count(), 3);
}

#[test]
fn work_is_bounded() {
    // Thread count and member count have limits with clear errors (exit 2).
    let cfg = config_with_sweep(SWEEP);
    let o = sweep(&cfg, "threads", &["--threads", "3000"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--threads"));
    let values: Vec<String> = (0..500).map(|i| format!("{}.0", 1000 + i)).collect();
    let huge = config_with_sweep(&format!(
        "[sweep]\n[[sweep.parameters]]\nkey = \"column.radius\"\nvalues = [{v}]\n[[sweep.parameters]]\nkey = \"updraft.peak_speed\"\nvalues = [{v}]\n",
        v = values.join(", ")
    ));
    let o = sweep(&huge, "huge", &[]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("at most 100000"));
}

#[test]
fn an_interrupted_sweep_resumes() {
    // A sweep whose member 2 never finished (its file is gone, as after a
    // kill): --resume reuses members 1 and 3 (their files are not written
    // again) and runs member 2; the summary equals the uninterrupted one.
    let cfg = config_with_sweep(SWEEP);
    assert_eq!(sweep(&cfg, "resumed", &[]).status.code(), Some(0));
    let dir = scratch("resumed");
    let full = read("resumed", "summary.csv");
    let modified = |i: usize| {
        std::fs::metadata(stormcharge::sweep::member_path(&dir, i))
            .unwrap()
            .modified()
            .unwrap()
    };
    let (m1, m3) = (modified(1), modified(3));
    std::fs::remove_file(dir.join("member_0002.nc")).unwrap();
    std::fs::remove_file(dir.join("summary.csv")).unwrap();
    std::thread::sleep(std::time::Duration::from_millis(20));
    sweep_ok(&cfg, "resumed", &["--resume"]);
    assert_eq!(read("resumed", "summary.csv"), full);
    assert_eq!((modified(1), modified(3)), (m1, m3));
    assert!(dir.join("member_0002.nc").exists());
    // A changed configuration is not reused: every member runs again.
    let changed = std::fs::read_to_string(&cfg)
        .unwrap()
        .replace("duration = 3600.0", "duration = 3000.0");
    let other = scratch("resumed_changed.toml");
    std::fs::write(&other, changed).unwrap();
    let o = sweep(&other, "resumed", &["--resume"]);
    assert_eq!(o.status.code(), Some(0));
    assert!(modified(1) > m1);
}

#[test]
fn an_outcomes_only_sweep_keeps_the_summary_without_member_files() {
    // For large ensembles a sweep can keep each member's outcome and the
    // summary only: the summary equals the full sweep's (the outcomes are
    // measured during the member's run, never read back from its file), no
    // member file is written, --resume reuses the members whose outcome
    // names their configuration, and a resume that wants member files runs
    // every member again (no file to check).
    let cfg = config_with_sweep(SWEEP);
    assert_eq!(sweep(&cfg, "outcomes_full", &[]).status.code(), Some(0));
    sweep_ok(&cfg, "outcomes_only", &["--outcomes-only"]);
    let full = read("outcomes_full", "summary.csv");
    assert_eq!(read("outcomes_only", "summary.csv"), full);
    let dir = scratch("outcomes_only");
    let outcome = |i: usize| stormcharge::sweep::outcome_path(&dir, i);
    for i in 1..=6 {
        assert!(!stormcharge::sweep::member_path(&dir, i).exists(), "{i}");
        assert!(outcome(i).exists(), "{i}");
    }
    let modified = |i: usize| std::fs::metadata(outcome(i)).unwrap().modified().unwrap();
    let (m1, m3) = (modified(1), modified(3));
    std::fs::remove_file(outcome(2)).unwrap();
    std::fs::remove_file(dir.join("summary.csv")).unwrap();
    std::thread::sleep(std::time::Duration::from_millis(20));
    let o = sweep(&cfg, "outcomes_only", &["--outcomes-only", "--resume"]);
    assert_eq!(o.status.code(), Some(0));
    assert_eq!(read("outcomes_only", "summary.csv"), full);
    assert_eq!((modified(1), modified(3)), (m1, m3));
    assert!(outcome(2).exists());
    let o = sweep(&cfg, "outcomes_only", &["--resume"]);
    assert_eq!(o.status.code(), Some(0));
    assert!(modified(1) > m1);
    assert!(dir.join("member_0001.nc").exists());
    assert_eq!(read("outcomes_only", "summary.csv"), full);
}

#[test]
fn analyze_reports_the_structure_shares_of_a_sweep() {
    // `analyze DIR` counts the summary's structure classes: the shares add
    // up to 100 %, every member that ran is listed once under its class,
    // and the counts equal those of the summary's own column.
    let cfg = config_with_sweep(SWEEP);
    assert_eq!(sweep(&cfg, "shares", &[]).status.code(), Some(0));
    let json = scratch("shares.json");
    let o = succeed(
        bin()
            .arg("analyze")
            .arg(scratch("shares"))
            .arg("--json")
            .arg(&json),
    );
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(text.contains("6 members ran (0 failed)"), "{text}");
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();
    let summary = read("shares", "summary.csv");
    let header: Vec<&str> = summary.lines().next().unwrap().split(',').collect();
    let column = |name: &str| header.iter().position(|h| *h == name).unwrap();
    // Each class table lists exactly the members whose summary field holds
    // the class; its shares add up to one. In the flashing-stage column an
    // empty field is a member without flashes, listed as "no_flashes".
    for (key, col) in [
        ("classes", "structure_at_peak_separation"),
        ("classes_while_flashing", "structure_while_flashing"),
    ] {
        let classes = v[key].as_array().unwrap();
        let total: f64 = classes.iter().map(|c| c[1].as_f64().unwrap()).sum();
        assert!((total - 1.0).abs() < 1e-12, "{key}");
        let col = column(col);
        for c in classes {
            let name = c[0].as_str().unwrap();
            let in_csv = summary
                .lines()
                .skip(1)
                .filter(|l| {
                    let f = l.split(',').nth(col).unwrap_or("");
                    f == name || (f.is_empty() && name == "no_flashes")
                })
                .count();
            assert_eq!(c[2].as_array().unwrap().len(), in_csv, "{key}: {name}");
        }
    }
    // The flash totals are the sums of the summary's flash columns.
    for (i, kind) in ["intracloud", "negative_ground", "positive_ground"]
        .iter()
        .enumerate()
    {
        let col = column(&format!("flashes_{kind}"));
        let sum: u64 = summary
            .lines()
            .skip(1)
            .map(|l| l.split(',').nth(col).unwrap().parse::<u64>().unwrap())
            .sum();
        assert_eq!(v["flashes"][i].as_u64().unwrap(), sum, "{kind}");
    }
    assert!(text.contains("ground flashes"), "{text}");
}

#[test]
fn a_sweeps_largest_separation_does_not_depend_on_the_output_interval() {
    // The structure and regions "at the largest separation" are read at the
    // moment the separation peaks (just before a flash in a flashing
    // storm), watched after every step and before every flash: records every 60 s or
    // every 1800 s give the same summary columns (a running maximum over
    // time is taken over the finest sampling available, common practice).
    let cfg = config_with_sweep(
        "[sweep]\n[[sweep.parameters]]\nkey = \"column.radius\"\nvalues = [2500.0, 3000.0]\n",
    );
    for (dir, interval) in [("interval_60", "60"), ("interval_1800", "1800")] {
        let set = format!("time.output_interval={interval}");
        assert_eq!(sweep(&cfg, dir, &["--set", &set]).status.code(), Some(0));
    }
    let columns = |dir: &str| -> Vec<Vec<String>> {
        let text = read(dir, "summary.csv");
        let header: Vec<&str> = text.lines().next().unwrap().split(',').collect();
        let wanted: Vec<usize> = header
            .iter()
            .enumerate()
            .filter(|(_, h)| {
                h.contains("separation")
                    || ["main_negative", "upper_positive", "lower_positive"]
                        .iter()
                        .any(|r| h.starts_with(r))
            })
            .map(|(i, _)| i)
            .collect();
        assert_eq!(wanted.len(), 15, "{header:?}");
        text.lines()
            .skip(1)
            .map(|l| {
                let f: Vec<&str> = l.split(',').collect();
                wanted.iter().map(|&i| f[i].to_string()).collect()
            })
            .collect()
    };
    assert_eq!(columns("interval_60"), columns("interval_1800"));
}

/// Summary fields with commas and quotes survive the round trip through
/// the CSV text, quoted and unquoted as RFC 4180 (2005) section 2 specifies
/// (its example `"aaa","b""bb","ccc"` reads back as aaa, b"bb, ccc).
#[test]
fn summary_csv_fields_round_trip_with_commas_and_quotes() {
    use stormcharge::output::csv::{csv_field, csv_fields};
    assert_eq!(
        csv_fields(r#""aaa","b""bb","ccc""#),
        ["aaa", "b\"bb", "ccc"]
    );
    let values = ["7", "[1.0, 2.0]", "said \"no\", twice", "", "ok"];
    let line: Vec<String> = values.iter().map(|v| csv_field(v)).collect();
    assert_eq!(csv_fields(&line.join(",")), values);
}

#[test]
fn summary_has_numeric_parameters_and_the_outcomes_a_comparison_needs() {
    // summary.nc: `member` an integer coordinate, a numeric swept key a
    // double named after the key with its units; the CSV rounds to six
    // significant digits and carries the region, rate and ground columns.
    let cfg = config_with_sweep(SWEEP);
    assert_eq!(sweep(&cfg, "numeric", &[]).status.code(), Some(0));
    let f = netcdf::open(scratch("numeric").join("summary.nc")).unwrap();
    let member = f.variable("member").unwrap();
    assert_eq!(
        member.vartype(),
        netcdf::types::NcVariableType::Int(netcdf::types::IntType::I32)
    );
    let summary = read("numeric", "summary.csv");
    let header = summary.lines().next().unwrap();
    for col in [
        "main_negative_C_m2",
        "main_negative_height_m",
        "upper_positive_temperature_degC",
        "flash_rate_intracloud_per_min",
        "ground_charge_C_m2",
        "first_flash_s",
        "drop_2p5mm_charge_C",
        "graupel_2p5mm_charge_C",
    ] {
        assert!(header.split(',').any(|h| h == col), "{col} in {header}");
    }
    for line in summary.lines().skip(1) {
        for field in line.split(',') {
            if let Ok(x) = field.parse::<f64>() {
                if x != 0.0 && x.is_finite() {
                    let digits = field
                        .trim_start_matches('-')
                        .split(['e', 'E'])
                        .next()
                        .unwrap()
                        .chars()
                        .filter(|c| c.is_ascii_digit())
                        .collect::<String>();
                    assert!(digits.trim_start_matches('0').len() <= 6, "{field}");
                }
            }
        }
    }
    // The sweep picture: one row per member, labelled with its values.
    let prefix = scratch("numeric_picture");
    succeed(
        bin()
            .arg("plot")
            .arg(scratch("numeric"))
            .arg("-o")
            .arg(&prefix)
            .arg("--svg"),
    );
    assert!(image::open(prefix.with_extension("png")).is_ok());
    let svg = std::fs::read_to_string(prefix.with_extension("svg")).unwrap();
    assert!(svg.contains("structure at peak separation"));
    for m in 1..=6 {
        assert!(svg.contains(&format!("{m}: ")), "member {m}");
    }
    let swept: Vec<String> = f
        .variables()
        .filter(|v| v.attributes().any(|a| a.name() == "key"))
        .map(|v| v.name())
        .collect();
    assert!(!swept.is_empty());
    for name in swept {
        let v = f.variable(&name).unwrap();
        assert_eq!(
            v.vartype(),
            netcdf::types::NcVariableType::Float(netcdf::types::FloatType::F64),
            "{name}"
        );
    }
}

#[test]
fn a_sweep_takes_set_overrides_and_a_base_include() {
    // `include` starts a configuration from another (its keys replaced key
    // by key), `--set` changes the base of every member, and an element of
    // an array of tables is addressed by its number (counted from 1).
    let dir = scratch("include_case");
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::copy(repo("configs/tripole_flashes.toml"), dir.join("base.toml")).unwrap();
    let cfg = dir.join("sweep.toml");
    std::fs::write(
        &cfg,
        "include = \"base.toml\"\n[time]\nduration = 600.0\n[sweep]\n[[sweep.parameters]]\nkey = \"column.radius\"\nvalues = [2000.0, 3000.0]\n",
    )
    .unwrap();
    let o = succeed(bin().arg("check").arg(&cfg));
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(text.contains("duration = 600.0"), "{text}");
    assert!(text.contains("300 steps of 2 s"), "{text}");
    let out = dir.join("out");
    succeed(
        bin()
            .args(["sweep", "--quiet", "-o"])
            .arg(&out)
            .arg(&cfg)
            .args(["--set", "prescribed_charge.layers[2].density=-5"]),
    );
    let member = netcdf::open(out.join("member_0001.nc")).unwrap();
    let stored = match member
        .attribute(stormcharge::output::reader::CONFIG_ATTRIBUTE)
        .unwrap()
        .value()
        .unwrap()
    {
        netcdf::AttributeValue::Str(s) => s,
        other => panic!("{other:?}"),
    };
    let c = stormcharge::setup::config::parse(&stored, "stored").unwrap();
    assert_eq!(c.prescribed_charge.layers[1].density, -5.0);
    assert_eq!(c.time.duration, 600.0);
    let o = bin()
        .arg("check")
        .arg(dir.join("base.toml"))
        .args(["--set", "prescribed_charge.layers[9].density=1"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    assert!(
        String::from_utf8_lossy(&o.stderr).contains("there is no element 9 of `layers` (3 given)")
    );
}

#[test]
fn a_sweep_can_estimate_each_members_numerical_error() {
    // sweep.error_estimate reruns each member at half and a quarter of its
    // step and of its spacing and reports the error of its own settings the
    // convergence command reports for the same configuration (its
    // "error" column for the peak field and the main negative charge):
    // equal to the six significant digits of the CSV, and small for this
    // smooth prescribed storm.
    let cfg = config_with_sweep(
        r#"
[sweep]
error_estimate = true
[[sweep.parameters]]
key = "column.radius"
values = [2000.0, 3000.0]
"#,
    );
    assert_eq!(sweep(&cfg, "estimate", &[]).status.code(), Some(0));
    let summary = read("estimate", "summary.csv");
    let header: Vec<&str> = summary.lines().next().unwrap().split(',').collect();
    let text = std::fs::read_to_string(&cfg).unwrap();
    for (row, radius) in summary.lines().skip(1).zip([2000.0, 3000.0]) {
        let set = [
            format!("column.radius={radius:?}"),
            "sweep.parameters=[]".to_string(),
        ];
        let report = stormcharge::convergence::study(
            &stormcharge::setup::config::ConfigText::plain(&text),
            "member",
            &repo("configs"),
            &set,
            3,
            2,
            &stormcharge::convergence::Refinement::BOTH,
        )
        .unwrap();
        for (name, outcome) in [
            ("peak_field", "peak |E_z|"),
            ("main_negative", "main negative region charge"),
        ] {
            for (series, refinement) in report.series.iter().zip(["time", "space"]) {
                let column = format!("error_{refinement}_{name}");
                let c = header.iter().position(|h| *h == column).unwrap();
                let v: f64 = row.split(',').nth(c).unwrap().parse().unwrap();
                let expected = series
                    .outcomes
                    .iter()
                    .find(|r| r.name == outcome)
                    .unwrap()
                    .error_of_configured;
                assert!(v.is_finite() && (0.0..0.1).contains(&v), "{column} = {v}");
                assert!(
                    (v - expected).abs() <= 1e-5 * expected.abs().max(1e-12),
                    "{column}: sweep {v}, converge {expected}"
                );
            }
        }
    }
    // The class and flash count each member has at half its step and at
    // half its spacing are those of the same members run as ordinary sweep
    // members with the step or the spacing halved (an independent path:
    // the member's own run, its own summary row).
    let halved = config_with_sweep(
        r#"
[sweep]
combine = "zip"
[[sweep.parameters]]
key = "column.radius"
values = [2000.0, 3000.0, 2000.0, 3000.0]
[[sweep.parameters]]
key = "time.step"
values = [1.0, 1.0, 2.0, 2.0]
[[sweep.parameters]]
key = "grid.spacing"
values = [100.0, 100.0, 50.0, 50.0]
"#,
    );
    sweep_ok(&halved, "estimate_halved", &["--outcomes-only"]);
    use stormcharge::output::csv::csv_fields;
    let table = |dir: &str| -> (Vec<String>, Vec<Vec<String>>) {
        let csv = read(dir, "summary.csv");
        let mut lines = csv.lines();
        let header = csv_fields(lines.next().unwrap());
        (header, lines.map(csv_fields).collect())
    };
    let (h_est, est) = table("estimate");
    let (h_half, half) = table("estimate_halved");
    let col = |h: &[String], name: &str| h.iter().position(|x| x == name).unwrap();
    let kinds = [
        "flashes_intracloud",
        "flashes_negative_ground",
        "flashes_positive_ground",
    ];
    let sum = |h: &[String], r: &[String], names: &[&str]| -> f64 {
        names
            .iter()
            .map(|k| r[col(h, k)].parse::<f64>().unwrap())
            .sum()
    };
    for (i, row) in est.iter().enumerate() {
        for (j, suffix) in ["half_step", "half_spacing"].into_iter().enumerate() {
            let other = &half[2 * j + i];
            let at = |name: &str| &row[col(&h_est, &format!("{name}_at_{suffix}"))];
            let which = format!("member {} at {suffix}", i + 1);
            for (name, own) in [
                ("structure", "structure_at_peak_separation"),
                ("structure_while_flashing", "structure_while_flashing"),
            ] {
                assert_eq!(at(name), &other[col(&h_half, own)], "{name}, {which}");
            }
            for (name, counted) in [("flashes", &kinds[..]), ("ground_flashes", &kinds[1..])] {
                let n: f64 = at(name).parse().unwrap();
                assert_eq!(n, sum(&h_half, other, counted), "{name}, {which}");
            }
        }
    }
    // `analyze` reports the check over both members.
    let o = bin()
        .arg("analyze")
        .arg(scratch("estimate"))
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(
        text.contains("numerics (sweep.error_estimate, 2 members rerun at half the step and half the spacing)"),
        "{text}"
    );
}

#[test]
fn channels_at_the_model_top_are_summarised() {
    // The prescribed tripole's channels stop inside the charge with the
    // local-field rule and, grown as floating conductors, run to the model
    // top (docs/discharge.md, "Channels that reach the model top"): the
    // summary counts them per member and `analyze` names the members.
    // Common practice: a boundary an answer depends on is reported.
    let cfg = config_with_sweep(
        r#"
[sweep]
[[sweep.parameters]]
key = "discharge.channel_rule"
values = ["local_field", "equipotential"]
"#,
    );
    sweep_ok(&cfg, "channels_top", &["--outcomes-only"]);
    use stormcharge::output::csv::csv_fields;
    let csv = read("channels_top", "summary.csv");
    let mut lines = csv.lines();
    let header = csv_fields(lines.next().unwrap());
    let col = |name: &str| header.iter().position(|h| h == name).unwrap();
    let (top, ic, neg, pos) = (
        col("flash_channels_at_model_top"),
        col("flashes_intracloud"),
        col("flashes_negative_ground"),
        col("flashes_positive_ground"),
    );
    let rows: Vec<Vec<String>> = lines.map(csv_fields).collect();
    let number = |r: &[String], c: usize| r[c].parse::<f64>().unwrap();
    assert_eq!(number(&rows[0], top), 0.0);
    let flashes = number(&rows[1], ic) + number(&rows[1], neg) + number(&rows[1], pos);
    assert!(flashes > 0.0);
    assert_eq!(number(&rows[1], top), flashes);
    let o = bin()
        .arg("analyze")
        .arg(scratch("channels_top"))
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(
        text.contains("flash channels reached the model top in 1 member")
            && text.contains("member 2: discharge.channel_rule=equipotential ("),
        "{text}"
    );
}
