//! `manifest.csv`: one row per exported isomer or derivative with its ID, list, both list
//! numbers, spiral, point group, the scalar descriptors and the files written for it (RFC 4180
//! quoting). A derivative's row is named by its pattern ID; list, numbers and spiral are its
//! parent's, the descriptor columns its own (see `export::derivative::scalar_fields`).
//!
//! Columns are fixed so that manifests of different runs can be concatenated. A number that
//! does not exist (a non-IPR cage has no IPR number) is an empty cell, so numeric columns read
//! as numbers with missing values (pandas, R).

use super::{scalar_fields, Entry};
use std::io::{self, Write};

/// Columns before the descriptors (and `files`, the last column).
const FIXED: [&str; 7] = [
    "id",
    "list",
    "number",
    "ipr_number",
    "spiral",
    "point_group",
    "files",
];

/// How every manifest this version writes begins (the fixed columns before the descriptors).
pub const HEADER_START: &str = "id,list,number,ipr_number,spiral,point_group,";

/// Writes the header and one row per entry; `files[i]` lists the file names of entry i.
pub fn write(w: &mut impl Write, entries: &[Entry], files: &[Vec<String>]) -> io::Result<()> {
    let Some(first) = entries.first() else {
        return writeln!(w, "{}", FIXED.join(","));
    };
    let names: Vec<String> = scalar_fields(first).into_iter().map(|(k, _)| k).collect();
    let mut header: Vec<String> = FIXED[..FIXED.len() - 1]
        .iter()
        .map(|s| s.to_string())
        .collect();
    header.extend(names.iter().cloned());
    header.push("files".into());
    writeln!(
        w,
        "{}",
        header
            .iter()
            .map(|h| quote(h))
            .collect::<Vec<_>>()
            .join(",")
    )?;
    for (entry, files) in entries.iter().zip(files) {
        let number = |n: Option<u64>| n.map_or(String::new(), |n| n.to_string());
        let mut row = vec![
            entry.name(),
            entry.id.list_tag().to_string(),
            number(entry.numbers.number),
            number(entry.numbers.ipr_number),
            entry.spiral.to_string(),
            entry.point_group(),
        ];
        row.extend(scalar_fields(entry).into_iter().map(|(_, v)| v));
        row.push(files.join(" "));
        writeln!(
            w,
            "{}",
            row.iter().map(|c| quote(c)).collect::<Vec<_>>().join(",")
        )?;
    }
    Ok(())
}

/// RFC 4180: quote a field containing a comma, quote or line break; double inner quotes.
pub fn quote(field: &str) -> String {
    if field.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", field.replace('"', "\"\""))
    } else {
        field.to_string()
    }
}
