//! Parsing, key and range checking, overrides and defaults.

use super::schema::{self, KeySpec, Kind};
use super::Config;
use crate::error::{ConfigError, ConfigIssue};
use toml::{Table, Value};

/// Parses configuration text (`origin` names it in errors: a file name or
/// `<embedded demo>`).
pub fn parse(text: &str, origin: &str) -> Result<Config, ConfigError> {
    parse_with_overrides(text, origin, &[])
}

/// Parses configuration text and applies `--set section.key=value` overrides.
pub fn parse_with_overrides(
    text: &str,
    origin: &str,
    overrides: &[String],
) -> Result<Config, ConfigError> {
    parse_config_text(&ConfigText::plain(text), origin, overrides)
}

/// A configuration's text together with the files it was merged from.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ConfigText {
    /// The text to parse: one file's own, or the merge of an `include` chain.
    pub text: String,
    /// For a merged text, the files behind it, the including file first,
    /// each with its own text: errors name the file and line that hold a
    /// key, not a line of the merged text. Empty for a single file.
    pub sources: Sources,
}

impl ConfigText {
    /// Text that comes from one file (or from no file).
    pub fn plain(text: &str) -> Self {
        ConfigText {
            text: text.to_string(),
            sources: Vec::new(),
        }
    }

    /// The same configuration with every `sweep.parameters` block's `values`
    /// emptied, in the merged text and in every file behind it, line for
    /// line: each list becomes `[]` around the line breaks it held, so every
    /// other key keeps its line for the error messages. A sweep member
    /// replaces `sweep.parameters` with an empty list anyway, so it resolves
    /// to the same configuration; but parsing an ensemble's value lists
    /// again for every member made the members' set-up grow with the
    /// ensemble (quadratic in the number of members: at 10,000 members each
    /// member re-read all 10,000 values three times).
    pub fn without_sweep_values(&self) -> ConfigText {
        ConfigText {
            text: without_sweep_values(&self.text),
            sources: self
                .sources
                .iter()
                .map(|(file, t)| (file.clone(), without_sweep_values(t)))
                .collect(),
        }
    }
}

/// `text` with the value of every `sweep.parameters[i].values` replaced by
/// `[` + its line breaks + `]`; unchanged when it does not parse (the
/// caller's own parse reports that).
fn without_sweep_values(text: &str) -> String {
    let Ok(doc) = toml_edit::ImDocument::parse(text) else {
        return text.to_string();
    };
    // `[[sweep.parameters]]` blocks, or one inline list of tables.
    let mut spans: Vec<std::ops::Range<usize>> =
        match doc.get("sweep").and_then(|s| s.get("parameters")) {
            Some(toml_edit::Item::ArrayOfTables(blocks)) => blocks
                .iter()
                .filter_map(|b| b.get("values")?.span())
                .collect(),
            Some(toml_edit::Item::Value(toml_edit::Value::Array(blocks))) => blocks
                .iter()
                .filter_map(|b| b.as_inline_table()?.get("values")?.span())
                .collect(),
            _ => Vec::new(),
        };
    spans.sort_by_key(|s| s.start);
    let mut out = String::with_capacity(text.len());
    let mut at = 0;
    for span in spans {
        if span.start < at || span.end > text.len() {
            return text.to_string();
        }
        out.push_str(&text[at..span.start]);
        out.push('[');
        // Carriage returns stay with their line feeds (a lone one is not
        // valid TOML, so none is kept without one).
        out.extend(
            text[span.clone()]
                .chars()
                .filter(|c| *c == '\n' || *c == '\r'),
        );
        out.push(']');
        at = span.end;
    }
    out.push_str(&text[at..]);
    out
}

/// [`parse_with_overrides`] on a configuration text that may have been
/// merged from several files.
pub fn parse_config_text(
    source: &ConfigText,
    origin: &str,
    overrides: &[String],
) -> Result<Config, ConfigError> {
    let text = source.text.as_str();
    let syntax = |e: toml_edit::TomlError, prefix: &str| {
        let line = e.span().map(|s| line_of_offset(text, s.start));
        ConfigError::single(
            origin,
            ConfigIssue::new("(syntax)", format!("{prefix}{}", e.message().trim())).line(line),
        )
    };
    // The plain parse; the document parse, which keeps where every key is,
    // only when a line is wanted (an error) or to word a syntax error (the
    // document's wording is the one users saw first). Both use the same
    // parser, so one fails exactly when the other does.
    let mut table: Table = match toml::from_str(text) {
        Ok(t) => t,
        Err(e) => {
            return Err(match toml_edit::ImDocument::parse(text) {
                Err(d) => syntax(d, "not valid TOML: "),
                Ok(_) => {
                    let line = e.span().map(|s| line_of_offset(text, s.start));
                    ConfigError::single(
                        origin,
                        ConfigIssue::new("(syntax)", e.message().trim().to_string()).line(line),
                    )
                }
            })
        }
    };

    let mut issues = Vec::new();
    let mut overridden: Vec<String> = Vec::new();
    for o in overrides {
        match parse_override(o) {
            Ok((path, value)) => {
                if let Err(issue) = insert(&mut table, &path, value) {
                    issues.push(issue);
                }
                overridden.push(path);
            }
            Err(issue) => issues.push(issue),
        }
    }

    // A configuration merged from an `include` has lines of its own files,
    // not of the merged text: the including file's keys are located in its
    // own text, a base's keys in the base's (below). Parsed on the first
    // error only: a configuration without one never needs a line (a sweep
    // reads its base once per member).
    let parsed = std::cell::OnceCell::new();
    let lines = || {
        parsed
            .get_or_init(|| {
                toml_edit::ImDocument::parse(text)
                    .ok()
                    .map(|doc| KeyLines::new(source, doc))
            })
            .as_ref()
    };
    let locate = |path: &str| -> Option<usize> {
        if overridden.iter().any(|o| o == path) {
            return None;
        }
        lines()?.in_own(path)
    };
    check_table(&mut table, "", &locate, &overridden, &mut issues);
    // Keys not in the including file: each base, nearest first.
    for issue in issues
        .iter_mut()
        .filter(|i| i.line.is_none() && !overridden.contains(&i.key))
    {
        if let Some((file, l)) = lines().and_then(|l| l.in_bases(&issue.key)) {
            issue.line = Some(l);
            issue.file = Some(file.to_string());
        }
    }
    if !issues.is_empty() {
        // File order reads best; --set problems (no line) come last.
        issues.sort_by_key(|i| i.line.unwrap_or(usize::MAX));
        return Err(ConfigError {
            origin: origin.to_string(),
            issues,
        });
    }

    let mut merged = defaults();
    merge(&mut merged, table);
    Value::Table(merged).try_into::<Config>().map_err(|e| {
        ConfigError::single(
            origin,
            ConfigIssue::new(
                "(structure)",
                format!("configuration does not fit the schema: {e}"),
            ),
        )
    })
}

/// Splits `a.b.c=value`; the value is read as a TOML value, or as a bare
/// string when it is not one (so `--set atmosphere.profile=sounding` works).
fn parse_override(text: &str) -> Result<(String, Value), ConfigIssue> {
    let Some((path, raw)) = text.split_once('=') else {
        return Err(
            ConfigIssue::new(text, "a --set override must look like section.key=value")
                .value(format!("\"{text}\""))
                .allowed("section.key=value"),
        );
    };
    let path = path.trim().to_string();
    let raw = raw.trim();
    let value = match toml::from_str::<Table>(&format!("v = {raw}")) {
        Ok(mut t) => t.remove("v").unwrap_or(Value::String(raw.to_string())),
        Err(_) => Value::String(raw.to_string()),
    };
    let plain = without_indices(&path);
    // An element key needs its element number: `layers[2].density`.
    let known = if plain == path {
        schema::find(&path).is_some()
    } else {
        schema::find_any(&plain).is_some()
    };
    if !known {
        return Err(unknown_key(&path, None, " (from --set)"));
    }
    Ok((path, value))
}

/// `prescribed_charge.layers[2].density` without its element numbers.
fn without_indices(path: &str) -> String {
    path.split('.')
        .map(|p| p.split_once('[').map_or(p, |(name, _)| name))
        .collect::<Vec<_>>()
        .join(".")
}

/// Applies `--set` overrides to configuration text and returns the text
/// (comments are not kept): for a sweep, whose members all start from it.
pub fn override_text(
    text: &str,
    origin: &str,
    overrides: &[String],
) -> Result<String, ConfigError> {
    let mut table: Table = toml::from_str(text).map_err(|e| {
        ConfigError::single(
            origin,
            ConfigIssue::new("(syntax)", e.message().trim().to_string())
                .line(e.span().map(|s| line_of_offset(text, s.start))),
        )
    })?;
    for o in overrides {
        let (path, value) = parse_override(o).map_err(|i| ConfigError::single("--set", i))?;
        insert(&mut table, &path, value).map_err(|i| ConfigError::single("--set", i))?;
    }
    toml::to_string(&table)
        .map_err(|e| ConfigError::single(origin, ConfigIssue::new("(syntax)", e.to_string())))
}

fn insert(table: &mut Table, path: &str, value: Value) -> Result<(), ConfigIssue> {
    let parts: Vec<&str> = path.split('.').collect();
    let mut t = table;
    for part in &parts[..parts.len() - 1] {
        // `layers[2]`: the second block of an array of tables (counted from
        // 1, as the messages count them); it must exist.
        if let Some((name, rest)) = part.split_once('[') {
            let index: usize = rest
                .strip_suffix(']')
                .and_then(|n| n.parse().ok())
                .filter(|&n| n >= 1)
                .ok_or_else(|| {
                    ConfigIssue::new(
                        path,
                        format!("`{part}`: the element number must be 1 or more, in brackets"),
                    )
                })?;
            let len = match t.get(name) {
                Some(Value::Array(a)) => a.len(),
                _ => 0,
            };
            let Some(Value::Table(inner)) = (match t.get_mut(name) {
                Some(Value::Array(a)) => a.get_mut(index - 1),
                _ => None,
            }) else {
                return Err(ConfigIssue::new(
                    path,
                    format!("there is no element {index} of `{name}` ({len} given)"),
                ));
            };
            t = inner;
            continue;
        }
        let entry = t
            .entry(part.to_string())
            .or_insert_with(|| Value::Table(Table::new()));
        t = match entry {
            Value::Table(inner) => inner,
            other => {
                return Err(ConfigIssue::new(
                    path,
                    format!("`{part}` is a value ({other}), not a section"),
                ));
            }
        };
    }
    t.insert(parts[parts.len() - 1].to_string(), value);
    Ok(())
}

/// Keys that earlier versions read and this one replaced: (old, new, why).
const RETIRED: [(&str, &str, &str); 1] = [(
    "charging.inductive_droplet_diameter",
    "microphysics.droplet_diameter",
    "one droplet size for the microphysics and the charging",
)];

fn unknown_key(path: &str, line: Option<usize>, suffix: &str) -> ConfigIssue {
    if let Some((_, new, why)) = RETIRED.iter().find(|(old, _, _)| *old == path) {
        return ConfigIssue::new(path, format!("key replaced by `{new}` ({why}){suffix}"))
            .allowed(format!("`{new}`"))
            .line(line);
    }
    let section = path.rsplit_once('.').map_or("", |(s, _)| s);
    let valid = if schema::is_section(section) || section.is_empty() {
        schema::children(section).join(", ")
    } else {
        format!("sections {}", schema::children("").join(", "))
    };
    ConfigIssue::new(path, format!("unknown key{suffix}"))
        .allowed(format!("keys here: {valid}"))
        .line(line)
}

fn check_table(
    table: &mut Table,
    prefix: &str,
    locate: &dyn Fn(&str) -> Option<usize>,
    overridden: &[String],
    issues: &mut Vec<ConfigIssue>,
) {
    for (key, value) in table.iter_mut() {
        let path = if prefix.is_empty() {
            key.clone()
        } else {
            format!("{prefix}.{key}")
        };
        if let Some(KeySpec {
            kind: Kind::TableArray(elements),
            ..
        }) = schema::find(&path)
        {
            check_table_array(value, &path, elements, locate, issues);
            continue;
        }
        if schema::is_section(&path) {
            match value {
                Value::Table(inner) => check_table(inner, &path, locate, overridden, issues),
                other => issues.push(
                    ConfigIssue::new(&path, "this is a section and must be a table")
                        .value(other.to_string())
                        .line(locate(&path)),
                ),
            }
            continue;
        }
        let Some(spec) = schema::find(&path) else {
            issues.push(unknown_key(&path, locate(&path), ""));
            continue;
        };
        if let Err(mut issue) = check_value(spec, value) {
            issue.line = locate(&path);
            if overridden.iter().any(|o| o == &path) {
                issue.message.push_str(" (from --set)");
            }
            issues.push(issue);
        }
    }
}

/// Checks every element of a list of tables against its element keys and
/// fills in the element defaults. Elements are numbered from 1 in messages.
fn check_table_array(
    value: &mut Value,
    path: &str,
    elements: &'static [KeySpec],
    locate: &dyn Fn(&str) -> Option<usize>,
    issues: &mut Vec<ConfigIssue>,
) {
    let Value::Array(items) = value else {
        issues.push(
            ConfigIssue::new(
                path,
                format!("expected a list of tables, found {}", value.type_str()),
            )
            .value(value.to_string())
            .allowed(format!("[[{path}]] blocks"))
            .line(locate(path)),
        );
        return;
    };
    for (i, item) in items.iter_mut().enumerate() {
        let here = format!("{path}[{}]", i + 1);
        let Value::Table(t) = item else {
            issues.push(ConfigIssue::new(&here, "expected a table").line(locate(path)));
            continue;
        };
        for (key, v) in t.iter_mut() {
            let full = format!("{here}.{key}");
            match elements.iter().find(|e| e.name() == key) {
                None => issues.push(
                    ConfigIssue::new(&full, "unknown key")
                        .allowed(format!(
                            "keys here: {}",
                            elements
                                .iter()
                                .map(|e| e.name())
                                .collect::<Vec<_>>()
                                .join(", ")
                        ))
                        .line(locate(&full)),
                ),
                Some(spec) => {
                    if let Err(mut issue) = check_value(spec, v) {
                        issue.key = full.clone();
                        issue.line = locate(&full);
                        issues.push(issue);
                    }
                }
            }
        }
        for spec in elements {
            if let Some(text) = spec.default {
                if !t.contains_key(spec.name()) {
                    t.insert(spec.name().to_string(), default_value(text));
                }
            }
        }
    }
}

fn default_value(text: &str) -> Value {
    toml::from_str::<Table>(&format!("v = {text}"))
        .ok()
        .and_then(|mut v| v.remove("v"))
        .unwrap_or(Value::String(text.to_string()))
}

/// Type- and range-checks one value, turning integers into floats for float keys.
fn check_value(spec: &KeySpec, value: &mut Value) -> Result<(), ConfigIssue> {
    // The value as given, written out only for a message (most values are
    // valid, and writing out a sounding's rows costs far more than copying
    // them); some kinds convert the value in place before they find a fault.
    let given = value.clone();
    let err = |msg: String| {
        // Floats in exponent form outside 1e-4..1e9 (TOML's own display
        // writes 1e300 out in full).
        let shown = match &given {
            Value::Float(x) if crate::error::wants_exponent(*x) => crate::error::shown_number(*x),
            other => other.to_string(),
        };
        ConfigIssue::new(spec.path, msg)
            .value(shown)
            .unit(spec.unit)
            .allowed(spec.kind.allowed())
    };
    match spec.kind {
        Kind::Float { .. } => {
            let x = match value {
                Value::Float(x) => *x,
                Value::Integer(i) => *i as f64,
                other => {
                    return Err(err(format!(
                        "expected a number, found {}",
                        other.type_str()
                    )))
                }
            };
            if !x.is_finite() || !spec.kind.contains(x) {
                return Err(err("value out of range".into()));
            }
            *value = Value::Float(x);
        }
        Kind::Choice(choices) => match value {
            Value::String(s) if choices.contains(&s.as_str()) => {}
            Value::String(_) => return Err(err("not one of the allowed names".into())),
            other => {
                return Err(err(format!(
                    "expected a name in quotes, found {}",
                    other.type_str()
                )))
            }
        },
        Kind::Text | Kind::Path => {
            let Value::String(s) = value else {
                return Err(err(format!(
                    "expected a string, found {}",
                    value.type_str()
                )));
            };
            if matches!(spec.kind, Kind::Path) && s.trim().is_empty() {
                return Err(err("the path is empty".into()));
            }
        }
        Kind::Integer { lo, hi } => {
            let Value::Integer(i) = value else {
                return Err(err(format!(
                    "expected a whole number, found {}",
                    value.type_str()
                )));
            };
            if *i < lo || *i > hi {
                return Err(err("value out of range".into()));
            }
        }
        Kind::Bool => {
            if !value.is_bool() {
                return Err(err(format!(
                    "expected true or false, found {}",
                    value.type_str()
                )));
            }
        }
        Kind::Timestamp => {
            // A native TOML date-time (start = 2026-07-14T15:00:00Z) is the
            // same time as its quoted text: take it as that text.
            if let Value::Datetime(dt) = value {
                *value = Value::String(dt.to_string());
            }
            let Value::String(s) = value else {
                return Err(err(format!(
                    "expected a quoted time string, found {}",
                    value.type_str()
                )));
            };
            if let Err(why) = parse_timestamp(s) {
                return Err(err(why));
            }
        }
        Kind::Names => {
            let ok = matches!(value, Value::Array(a) if a.iter().all(|v| v.is_str()));
            if !ok {
                return Err(err("expected a list of quoted names".into()));
            }
        }
        Kind::TableArray(_) => {
            // Checked element by element in check_table_array.
        }
        Kind::Values => {
            if !matches!(value, Value::Array(a) if !a.is_empty()) {
                return Err(err("expected a non-empty list of values".into()));
            }
        }
        Kind::Rows => {
            let Value::Array(rows) = value else {
                return Err(err(format!(
                    "expected a list of rows, found {}",
                    value.type_str()
                )));
            };
            for (i, row) in rows.iter_mut().enumerate() {
                let Value::Array(cells) = row else {
                    return Err(err(format!("row {} is not a list of numbers", i + 1)));
                };
                for cell in cells.iter_mut() {
                    match cell {
                        Value::Float(_) => {}
                        Value::Integer(n) => *cell = Value::Float(*n as f64),
                        other => {
                            return Err(err(format!(
                                "row {} holds {} where a number belongs",
                                i + 1,
                                other.type_str()
                            )))
                        }
                    }
                }
            }
        }
    }
    Ok(())
}

/// Checks `YYYY-MM-DDTHH:MM:SSZ` and returns (year, month, day, hour, minute, second).
pub fn parse_timestamp(s: &str) -> Result<(i32, u32, u32, u32, u32, u32), String> {
    let b = s.as_bytes();
    let shape_ok = b.len() == 20
        && b[4] == b'-'
        && b[7] == b'-'
        && b[10] == b'T'
        && b[13] == b':'
        && b[16] == b':'
        && b[19] == b'Z'
        && [0, 1, 2, 3, 5, 6, 8, 9, 11, 12, 14, 15, 17, 18]
            .iter()
            .all(|&i| b[i].is_ascii_digit());
    if !shape_ok {
        return Err("not of the form YYYY-MM-DDTHH:MM:SSZ".into());
    }
    let num = |r: std::ops::Range<usize>| s[r].parse::<u32>().unwrap_or(u32::MAX);
    let (y, mo, d, h, mi, se) = (
        num(0..4),
        num(5..7),
        num(8..10),
        num(11..13),
        num(14..16),
        num(17..19),
    );
    let leap = (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
    let days = match mo {
        1 | 3 | 5 | 7 | 8 | 10 | 12 => 31,
        4 | 6 | 9 | 11 => 30,
        2 if leap => 29,
        2 => 28,
        _ => return Err(format!("month {mo} does not exist")),
    };
    if d == 0 || d > days {
        return Err(format!("day {d} does not exist in month {mo} of {y}"));
    }
    if h > 23 || mi > 59 || se > 59 {
        return Err("time of day out of range".into());
    }
    Ok((y as i32, mo, d, h, mi, se))
}

fn defaults() -> Table {
    // Built once: every configuration read (each member of a sweep) starts
    // from a copy.
    static DEFAULTS: std::sync::OnceLock<Table> = std::sync::OnceLock::new();
    DEFAULTS
        .get_or_init(|| {
            let mut t = Table::new();
            for spec in schema::KEYS {
                if let Some(text) = spec.default {
                    // Paths in the schema never collide with values, so this
                    // cannot fail.
                    let _ = insert(&mut t, spec.path, default_value(text));
                }
            }
            t
        })
        .clone()
}

fn merge(base: &mut Table, over: Table) {
    for (k, v) in over {
        match (base.get_mut(&k), v) {
            (Some(Value::Table(b)), Value::Table(o)) => merge(b, o),
            (_, v) => {
                base.insert(k, v);
            }
        }
    }
}

fn line_of_offset(text: &str, offset: usize) -> usize {
    text[..offset.min(text.len())]
        .bytes()
        .filter(|&c| c == b'\n')
        .count()
        + 1
}

/// The texts a configuration was read from, each parsed once, for the
/// line that sets a key: the including file's own text (or the text of a
/// configuration from one file), then each base, nearest first.
struct KeyLines<'a> {
    own: (&'a str, toml_edit::ImDocument<&'a str>),
    sources: &'a Sources,
    /// The bases, parsed when a key is first looked for in them (most
    /// configurations read without an error never need them).
    bases: std::cell::OnceCell<Vec<(&'a str, &'a str, toml_edit::ImDocument<&'a str>)>>,
}

impl<'a> KeyLines<'a> {
    /// `merged` is the parsed text of `source`, used as the own text when
    /// the configuration comes from one file.
    fn new(source: &'a ConfigText, merged: toml_edit::ImDocument<&'a str>) -> Self {
        let own_file = source
            .sources
            .first()
            .and_then(|(_, t)| Some((t.as_str(), toml_edit::ImDocument::parse(t.as_str()).ok()?)));
        KeyLines {
            own: own_file.unwrap_or((source.text.as_str(), merged)),
            sources: &source.sources,
            bases: std::cell::OnceCell::new(),
        }
    }

    /// The line of `path` in the own text.
    fn in_own(&self, path: &str) -> Option<usize> {
        key_line(&self.own.1, self.own.0, path)
    }

    /// The nearest base that sets `path`, and the line.
    fn in_bases(&self, path: &str) -> Option<(&'a str, usize)> {
        let sources: &'a Sources = self.sources;
        self.bases
            .get_or_init(|| {
                sources
                    .iter()
                    .skip(1)
                    .filter_map(|(file, t)| {
                        Some((
                            file.as_str(),
                            t.as_str(),
                            toml_edit::ImDocument::parse(t.as_str()).ok()?,
                        ))
                    })
                    .collect()
            })
            .iter()
            .find_map(|(file, t, d)| Some((*file, key_line(d, t, path)?)))
    }
}

/// Where a configuration text sets `path`, as the reader's own errors give
/// it: the line, with the file when it is a base (not the including file),
/// or `(None, None)` when no file sets it (a default, or a `--set` among
/// `overrides`). For checks made after the configuration has been read.
pub fn locate_key(
    source: &ConfigText,
    path: &str,
    overrides: &[String],
) -> (Option<String>, Option<usize>) {
    // A `--set` wins over every file, and has no line.
    let overridden = overrides
        .iter()
        .filter_map(|o| parse_override(o).ok())
        .any(|(p, _)| p == path);
    if overridden {
        return (None, None);
    }
    let Ok(merged) = toml_edit::ImDocument::parse(source.text.as_str()) else {
        return (None, None);
    };
    let lines = KeyLines::new(source, merged);
    if let Some(l) = lines.in_own(path) {
        (None, Some(l))
    } else if let Some((file, l)) = lines.in_bases(path) {
        (Some(file.to_string()), Some(l))
    } else {
        (None, None)
    }
}

/// Gives the issues of `e` that have no line the line that sets their key
/// ([`locate_key`]'s answer), or, for a key no file sets, the line of the
/// nearest enclosing key or block that one does (the block of a layer that
/// lacks `thickness`). A key given by `--set` keeps none. For checks made
/// after the configuration has been read (the experiment's set-up, the
/// sweep's expansion), which name keys but not lines; the text is parsed
/// once for all of them.
pub fn with_lines(mut e: ConfigError, source: &ConfigText, overrides: &[String]) -> ConfigError {
    let set: Vec<String> = overrides
        .iter()
        .filter_map(|o| parse_override(o).ok())
        .map(|(p, _)| p)
        .collect();
    let parsed = std::cell::OnceCell::new();
    let lines = || {
        parsed
            .get_or_init(|| {
                toml_edit::ImDocument::parse(source.text.as_str())
                    .ok()
                    .map(|doc| KeyLines::new(source, doc))
            })
            .as_ref()
    };
    for issue in e.issues.iter_mut().filter(|i| i.line.is_none()) {
        let mut path = issue.key.as_str();
        while !set.iter().any(|p| p == path) {
            let Some(lines) = lines() else { break };
            if let Some(l) = lines.in_own(path) {
                issue.line = Some(l);
                break;
            }
            if let Some((file, l)) = lines.in_bases(path) {
                (issue.file, issue.line) = (Some(file.to_string()), Some(l));
                break;
            }
            match path.rfind('.') {
                Some(i) => path = &path[..i],
                None => break,
            }
        }
    }
    e
}

/// Line of a key in the source, found through toml_edit's spans. Path parts
/// may carry a 1-based element index, `layers[2]`, for lists of tables.
fn key_line(doc: &toml_edit::ImDocument<&str>, text: &str, path: &str) -> Option<usize> {
    use toml_edit::{Item, Value as V};
    enum Node<'a> {
        Table(&'a toml_edit::Table),
        Inline(&'a toml_edit::InlineTable),
    }
    let mut node = Node::Table(doc.as_table());
    let mut span = None;
    for part in path.split('.') {
        let (name, index) = match part.split_once('[') {
            Some((n, rest)) => (n, rest.trim_end_matches(']').parse::<usize>().ok()),
            None => (part, None),
        };
        let (key, item) = match node {
            Node::Table(t) => t.get_key_value(name)?,
            Node::Inline(t) => t.get_key_value(name)?,
        };
        span = key.span().or_else(|| item.span()).or(span);
        node = match (item, index) {
            (Item::Table(t), None) => Node::Table(t),
            (Item::Value(V::InlineTable(t)), None) => Node::Inline(t),
            (Item::ArrayOfTables(a), Some(i)) => {
                let t = a.get(i.checked_sub(1)?)?;
                span = t.span().or(span);
                Node::Table(t)
            }
            (Item::Value(V::Array(a)), Some(i)) => match a.get(i.checked_sub(1)?)? {
                V::InlineTable(t) => {
                    span = t.span().or(span);
                    Node::Inline(t)
                }
                _ => break,
            },
            _ => break,
        };
    }
    span.map(|s| line_of_offset(text, s.start))
}

/// The files a merged configuration text came from, the including file
/// first, each with its own text.
type Sources = Vec<(String, String)>;

/// Most nested `include`s (a file including itself would never end).
pub const MAX_INCLUDE_DEPTH: usize = 4;

/// A configuration may start from another: a top-level
/// `include = "base.toml"` (relative to the including file) takes every key
/// of that file, and the including file's own keys replace it key by key
/// (tables merge; arrays of tables are replaced whole). Returns the merged
/// text (comments are not kept) with the files it came from, or the text
/// unchanged without `include`.
pub fn resolve_include(
    text: &str,
    path: &std::path::Path,
    depth: usize,
) -> Result<ConfigText, ConfigError> {
    let (merged, sources) = merge_includes(text, path, depth)?;
    Ok(ConfigText {
        text: merged,
        sources: if sources.len() > 1 {
            sources
        } else {
            Vec::new()
        },
    })
}

/// [`resolve_include`] with the files the text came from, the including
/// file first.
fn merge_includes(
    text: &str,
    path: &std::path::Path,
    depth: usize,
) -> Result<(String, Sources), ConfigError> {
    let origin = path.display().to_string();
    let alone = || (text.to_string(), vec![(origin.clone(), text.to_string())]);
    let Ok(mut table) = toml::from_str::<Table>(text) else {
        // Syntax errors are reported by the parser with their line.
        return Ok(alone());
    };
    let Some(include) = table.remove("include") else {
        return Ok(alone());
    };
    // The line of `include` in this file (only wanted for a message).
    let line = || {
        toml_edit::ImDocument::parse(text)
            .ok()
            .and_then(|d| key_line(&d, text, "include"))
    };
    let issue =
        |msg: String| ConfigError::single(&origin, ConfigIssue::new("include", msg).line(line()));
    let Value::String(name) = include else {
        return Err(issue(
            "expected the quoted path of a base configuration".into(),
        ));
    };
    if depth >= MAX_INCLUDE_DEPTH {
        return Err(issue(format!(
            "more than {MAX_INCLUDE_DEPTH} nested includes (does a file include itself?)"
        )));
    }
    let base_path = directory_of(path).join(&name);
    let base_text = std::fs::read_to_string(&base_path).map_err(|e| {
        issue(format!(
            "cannot read the base configuration {}: {e}",
            base_path.display()
        ))
    })?;
    let (base_text, base_sources) = merge_includes(&base_text, &base_path, depth + 1)?;
    let mut base: Table = toml::from_str(&base_text).map_err(|e| {
        ConfigError::single(
            base_path.display().to_string(),
            ConfigIssue::new("(syntax)", e.message().trim().to_string())
                .line(e.span().map(|s| line_of_offset(&base_text, s.start))),
        )
    })?;
    merge(&mut base, table);
    let merged = toml::to_string(&base).map_err(|e| issue(e.to_string()))?;
    let mut sources = vec![(origin.clone(), text.to_string())];
    sources.extend(base_sources);
    Ok((merged, sources))
}

/// The directory holding `path` (`.` for a bare file name).
pub fn directory_of(path: &std::path::Path) -> &std::path::Path {
    path.parent()
        .filter(|d| !d.as_os_str().is_empty())
        .unwrap_or(std::path::Path::new("."))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn timestamps() {
        assert!(parse_timestamp("2024-02-29T12:00:00Z").is_ok());
        assert!(parse_timestamp("2023-02-29T12:00:00Z").is_err());
        assert!(parse_timestamp("2023-13-01T00:00:00Z").is_err());
        assert!(parse_timestamp("2023-01-01 00:00:00").is_err());
    }

    #[test]
    fn defaults_alone_make_a_valid_config() {
        let c = parse("", "empty").expect("defaults are valid");
        assert_eq!(c.grid.top, 20_000.0);
        assert_eq!(c.grid.spacing, 100.0);
    }

    #[test]
    fn line_numbers_come_from_the_source() {
        let e = parse("[grid]\n\nspacing = -3\n", "t").unwrap_err();
        assert_eq!(e.issues[0].key, "grid.spacing");
        assert_eq!(e.issues[0].line, Some(3));
    }

    /// A sweep's members start from the text without the value lists
    /// (common practice: the members read only what they use). Every other
    /// key keeps its line, and a member resolves to the same configuration.
    #[test]
    fn emptied_value_lists_keep_lines_and_members() {
        let text = "[sweep]\ncombine = \"product\"\n\n[[sweep.parameters]]\n\
                    key = \"updraft.peak_speed\"\nvalues = [\n  9.0, # slow\n  10.0,\n  11.0,\n]\n\n\
                    [[sweep.parameters]]\nkey = \"charging.scheme\"\n\
                    values = [\"saunders_peck_1998\", \"gardiner_1985\"]\n\n\
                    [grid]\nspacing = -3\n";
        let source = ConfigText::plain(text);
        let emptied = source.without_sweep_values();
        assert_eq!(emptied.text.lines().count(), text.lines().count());
        assert!(!emptied.text.contains("9.0") && !emptied.text.contains("gardiner"));
        // The faulty key after the lists is found on its own line, 17 (the
        // emptied lists are faults of their own until a member replaces
        // them).
        for s in [&source, &emptied] {
            let e = parse_config_text(s, "t", &[]).unwrap_err();
            let spacing = e.issues.iter().find(|i| i.key == "grid.spacing");
            assert_eq!(spacing.and_then(|i| i.line), Some(17));
        }
        // A member (its values set, the parameters emptied) is the same
        // configuration from either text.
        let member = [
            "updraft.peak_speed=10.0".to_string(),
            "charging.scheme=\"gardiner_1985\"".to_string(),
            "grid.spacing=50.0".to_string(),
            "sweep.parameters=[]".to_string(),
        ];
        let a = parse_config_text(&source, "t", &member).expect("member resolves");
        let b = parse_config_text(&emptied, "t", &member).expect("member resolves");
        assert_eq!(a.to_toml(), b.to_toml());
    }
}
