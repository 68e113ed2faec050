//! CSV export of the pass table: one row per pass, one column per label.
//!
//! That shape charts directly in a spreadsheet (a label's column against the
//! pass or mass column). Columns: part, pass, time (UTC, RFC 3339), mass,
//! mean thickness, the thickness readings as text, air temperature, relative
//! humidity, note, then one "<label> (Hz)" column for every label used in any
//! part (in the parts' label order), then the labels still to be confirmed.
//! Fields are quoted as RFC 4180 describes (commas, quotes, line breaks);
//! rows end with `\n`. Frequencies and masses have two decimals.

use super::model::{Build, Part, Pass};

/// The pass table of every part of `build` as CSV text, header first.
pub fn pass_table(build: &Build) -> String {
    let labels = labels_in_use(build);
    let mut out = String::new();
    let mut header: Vec<String> = [
        "part",
        "pass",
        "time (UTC)",
        "mass (g)",
        "mean thickness (mm)",
        "thickness readings (mm)",
        "air (°C)",
        "relative humidity (%)",
        "note",
    ]
    .iter()
    .map(|s| (*s).to_string())
    .collect();
    header.extend(labels.iter().map(|l| format!("{l} (Hz)")));
    header.push("labels to confirm".to_string());
    push_row(&mut out, &header);
    for part in build.parts() {
        for pass in part.passes() {
            push_row(&mut out, &pass_row(part, pass, &labels));
        }
    }
    out
}

fn labels_in_use(build: &Build) -> Vec<String> {
    let mut labels: Vec<String> = Vec::new();
    for part in build.parts() {
        for label in part.labels_in_use() {
            if !labels.iter().any(|l| l == label) {
                labels.push(label.to_string());
            }
        }
    }
    labels
}

fn pass_row(part: &Part, pass: &Pass, labels: &[String]) -> Vec<String> {
    let optional = |value: Option<f64>, decimals: usize| {
        value.map(|v| format!("{v:.decimals$}")).unwrap_or_default()
    };
    let readings = pass
        .thickness
        .iter()
        .map(|r| format!("{} {:.2}", r.point, r.thickness_mm))
        .collect::<Vec<_>>()
        .join("; ");
    let mut row = vec![
        part.name().to_string(),
        pass.number().to_string(),
        pass.time.to_string(),
        format!("{:.2}", pass.mass_g),
        optional(pass.mean_thickness_mm(), 2),
        readings,
        optional(pass.air_temp_c, 1),
        optional(pass.relative_humidity_pct, 1),
        pass.note.clone(),
    ];
    row.extend(
        labels
            .iter()
            .map(|l| optional(pass.mode_labelled(l).map(|m| m.frequency_hz), 2)),
    );
    let to_confirm = pass.labels_to_confirm();
    row.push(to_confirm.join("; "));
    row
}

fn push_row(out: &mut String, fields: &[String]) {
    let quoted: Vec<String> = fields.iter().map(|f| quote(f)).collect();
    out.push_str(&quoted.join(","));
    out.push('\n');
}

/// Quotes a field if it holds a comma, quote or line break, or starts or
/// ends with a space; quotes inside are doubled (RFC 4180).
pub fn quote(field: &str) -> String {
    let needs_quotes =
        field.contains([',', '"', '\n', '\r']) || field.starts_with(' ') || field.ends_with(' ');
    if needs_quotes {
        format!("\"{}\"", field.replace('"', "\"\""))
    } else {
        field.to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fields_are_quoted_as_rfc4180_says() {
        assert_eq!(quote("plain"), "plain");
        assert_eq!(quote("a, b"), "\"a, b\"");
        assert_eq!(quote("say \"ah\""), "\"say \"\"ah\"\"\"");
        assert_eq!(quote("two\nlines"), "\"two\nlines\"");
        assert_eq!(quote(""), "");
    }
}
