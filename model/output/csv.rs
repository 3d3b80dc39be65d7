//! The CSV text of sweep summaries: fields quoted as RFC 4180 (2005)
//! section 2 asks, written by the sweep and read back by `analyze` and
//! `sweep-merge`.

/// One CSV field, quoted as RFC 4180 (2005) section 2 asks when it holds a
/// comma or a quote (inner quotes doubled).
pub fn csv_field(v: &str) -> String {
    if v.contains(',') || v.contains('"') {
        format!("\"{}\"", v.replace('"', "\"\""))
    } else {
        v.to_string()
    }
}

/// The fields of one CSV record written by [`csv_field`] (RFC 4180 section
/// 2: a quoted field may hold commas, and a doubled quote stands for one).
pub fn csv_fields(line: &str) -> Vec<String> {
    let mut fields = Vec::new();
    let mut field = String::new();
    let mut quoted = false;
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        match (c, quoted) {
            ('"', true) if chars.peek() == Some(&'"') => {
                field.push('"');
                chars.next();
            }
            ('"', _) => quoted = !quoted,
            (',', false) => fields.push(std::mem::take(&mut field)),
            _ => field.push(c),
        }
    }
    fields.push(field);
    fields
}
