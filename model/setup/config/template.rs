//! Generated documents: the commented configuration written by `init` and the
//! key reference in docs/configuration.md. Both come from [`super::schema::KEYS`].

use super::schema::{self, KeySpec, Kind};

fn unit_text(k: &KeySpec) -> &str {
    if k.unit.is_empty() {
        "-"
    } else {
        k.unit
    }
}

/// Example values for keys without a default, shown commented out.
fn example(k: &KeySpec) -> &'static str {
    match k.path {
        "atmosphere.sounding.columns" => "[\"height\", \"temperature\", \"dew_point\"]",
        "atmosphere.sounding.rows" => "[[0.0, 27.0, 21.0], [20000.0, -60.0, -75.0]]",
        "atmosphere.sounding.file" => "\"sounding.csv\"",
        "atmosphere.sounding.surface_pressure" => "100000.0",
        "prescribed_charge.layers.center" => "6000.0",
        "sweep.parameters.key" => "\"updraft.peak_speed\"",
        "sweep.parameters.values" => "[8.0, 10.0, 12.0]",
        "hydrometeors.layers.species" => "\"graupel\"",
        "hydrometeors.layers.center" => "6000.0",
        "hydrometeors.layers.thickness" => "1500.0",
        "hydrometeors.layers.mixing_ratio" => "2.0e-3",
        "prescribed_charge.layers.thickness" => "2000.0",
        "prescribed_charge.layers.points" => "[[4000.0, 0.0], [6000.0, 1.0], [8000.0, 0.0]]",
        "updraft.profile_points" => "[[0.0, 0.0], [6000.0, 1.0], [13000.0, 0.0]]",
        "updraft.envelope_points" => "[[0.0, 0.0], [900.0, 1.0], [2700.0, 0.0]]",
        "hydrometeors.layers.points" => "[[4000.0, 0.0], [6000.0, 1.0], [8000.0, 0.0]]",
        "hydrometeors.layers.envelope_points" => "[[0.0, 0.0], [600.0, 1.0], [1800.0, 0.0]]",
        "prescribed_charge.layers.envelope_points" => "[[0.0, 0.0], [600.0, 1.0], [1800.0, 0.0]]",
        "charging.table_file" => "\"charge_table.csv\"",
        "charging.table_columns" => "[\"temperature_degC\", \"liquid_water_g_m3\", \"charge_fC\"]",
        "charging.table_rows" => {
            "[[-30.0, 0.5, -10.0], [-30.0, 2.0, -5.0], [-5.0, 0.5, 10.0], [-5.0, 2.0, 15.0]]"
        }
        "ions.ionisation_points" => "[[0.0, 2.0e6], [20000.0, 4.0e7]]",
        "output.variables" => {
            "[\"air_temperature\", \"charge_density\", \"electric_field\", \"q_graupel\"]"
        }
        _ => "",
    }
}

/// The value the built-in demo gives the key at dotted `path`, if it sets it.
fn demo_value(demo: &toml::Table, path: &str) -> Option<String> {
    let mut parts = path.split('.').peekable();
    let mut table = demo;
    while let Some(part) = parts.next() {
        let v = table.get(part)?;
        if parts.peek().is_none() {
            return Some(v.to_string());
        }
        table = v.as_table()?;
    }
    None
}

/// A complete configuration with every key, its unit, default and allowed
/// range as comments, describing the built-in demo's storm: the keys the
/// demo sets (outside `[output]`) carry its values, every other key its
/// default. Parsing it gives the demo's experiment (with the default
/// output settings), a storm that flashes.
pub fn init_text() -> String {
    let demo: toml::Table =
        toml::from_str(super::DEMO_TOML).expect("the embedded demo configuration parses");
    let mut out = String::new();
    out.push_str(
        "# stormcharge experiment configuration (written by `stormcharge init`).\n\
         # Every key is listed with its unit, allowed values and default.\n\
         # Keys without a default are commented out; remove the '#' to use them.\n\
         # The storm is the built-in demo's (an invented afternoon storm over a\n\
         # fictional plain, configs/demo.toml): the keys it sets carry its values\n\
         # and say so; delete such a line to fall back to the default.\n\
         # stormcharge is a research and teaching model, not a lightning-safety or\n\
         # forecasting tool.\n",
    );
    for section in schema::sections() {
        out.push_str(&format!("\n[{section}]\n"));
        for k in schema::KEYS.iter().filter(|k| k.section() == section) {
            out.push('\n');
            for line in wrap(k.doc, 76) {
                out.push_str(&format!("# {line}\n"));
            }
            let default = k.default.unwrap_or("none");
            out.push_str(&format!(
                "# unit: {}; allowed: {}; default: {}\n",
                unit_text(k),
                k.kind.allowed(),
                default
            ));
            match (k.kind, k.default) {
                (Kind::TableArray(elements), _) => {
                    out.push_str(&format!(
                        "# One block per element; an example (remove the '#'s):\n# [[{}]]\n",
                        k.path
                    ));
                    for e in elements
                        .iter()
                        .filter(|e| e.default.is_some() || !matches!(e.kind, Kind::Rows))
                    {
                        out.push_str(&format!(
                            "#   {} = {}    # unit: {}; allowed: {}; default: {}\n",
                            e.name(),
                            e.default.unwrap_or_else(|| example(e)),
                            unit_text(e),
                            e.kind.allowed(),
                            e.default.unwrap_or("none")
                        ));
                    }
                    for e in elements
                        .iter()
                        .filter(|e| e.default.is_none() && matches!(e.kind, Kind::Rows))
                    {
                        // A table key belongs with the choice its
                        // description names; its first sentence says which.
                        let first = e.doc.split(". ").next().unwrap_or(e.doc);
                        out.push_str(&format!(
                            "#   {} = {}    # {}\n",
                            e.name(),
                            example(e),
                            first
                        ));
                    }
                }
                _ if section != "output" && demo_value(&demo, k.path).is_some() => {
                    let v = demo_value(&demo, k.path).unwrap_or_default();
                    out.push_str(&format!("{} = {}    # the demo's value\n", k.name(), v));
                }
                (_, Some(d)) => out.push_str(&format!("{} = {}\n", k.name(), d)),
                (_, None) => out.push_str(&format!("# {} = {}\n", k.name(), example(k))),
            }
        }
    }
    out
}

/// The key reference as Markdown tables, one per section.
pub fn reference_markdown() -> String {
    let mut out = String::new();
    for section in schema::sections() {
        out.push_str(&format!("\n### `[{section}]`\n\n"));
        out.push_str("| key | unit | default | allowed | meaning |\n|---|---|---|---|---|\n");
        let mut element_tables = Vec::new();
        for k in schema::KEYS.iter().filter(|k| k.section() == section) {
            out.push_str(&table_row(k));
            if let Kind::TableArray(elements) = k.kind {
                element_tables.push((k.path, elements));
            }
        }
        for (path, elements) in element_tables {
            out.push_str(&format!("\nKeys of each `[[{path}]]` block:\n\n"));
            out.push_str("| key | unit | default | allowed | meaning |\n|---|---|---|---|---|\n");
            for e in elements {
                out.push_str(&table_row(e));
            }
        }
    }
    out
}

fn table_row(k: &KeySpec) -> String {
    format!(
        "| `{}` | {} | {} | {} | {} |\n",
        k.name(),
        unit_text(k),
        k.default.map_or("(none)".to_string(), |d| format!("`{d}`")),
        k.kind.allowed().replace('|', "\\|"),
        k.doc.replace('|', "\\|")
    )
}

fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        if !line.is_empty() && line.len() + 1 + word.len() > width {
            lines.push(std::mem::take(&mut line));
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.is_empty() {
        lines.push(line);
    }
    lines
}

/// The resolved configuration as TOML without the sections this run does
/// not use (for `check`), and the names of those left out. The stored
/// configuration of an output keeps everything.
pub fn used_sections(c: &super::Config) -> (String, Vec<&'static str>) {
    let mut table: toml::Table = match toml::from_str(&c.to_toml()) {
        Ok(t) => t,
        Err(_) => return (c.to_toml(), Vec::new()),
    };
    let mut left_out = Vec::new();
    let mut drop = |table: &mut toml::Table, name: &'static str| {
        if table.remove(name).is_some() {
            left_out.push(name);
        }
    };
    if c.microphysics.scheme != crate::physics::microphysics::Mode::Prescribed {
        drop(&mut table, "hydrometeors");
    }
    if c.prescribed_charge.layers.is_empty() {
        drop(&mut table, "prescribed_charge");
    }
    if c.sweep.parameters.is_empty() {
        drop(&mut table, "sweep");
    }
    if !c.discharge.enabled {
        drop(&mut table, "discharge");
    }
    let text = toml::to_string(&table).unwrap_or_else(|_| c.to_toml());
    (text, left_out)
}
