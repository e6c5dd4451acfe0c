//! `manifest.csv`: one row per exported isomer with its ID, spiral, point group, the scalar
//! descriptors and the files written for it (RFC 4180 quoting).
//!
//! Columns are fixed so that manifests of different runs can be concatenated.

use super::{scalar_fields, Entry};
use std::io::{self, Write};

/// Writes the header and one row per entry; `files[i]` lists the file names of entry i.
pub fn write(w: &mut impl Write, entries: &[Entry], files: &[Vec<String>]) -> io::Result<()> {
    let Some(first) = entries.first() else {
        return writeln!(w, "id,spiral,point_group,files");
    };
    let names: Vec<String> = scalar_fields(first).into_iter().map(|(k, _)| k).collect();
    let mut header = vec!["id".to_string(), "spiral".into(), "point_group".into()];
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
        let mut row = vec![
            entry.id.clone(),
            entry.spiral.to_string(),
            entry.record.descriptors.point_group.name(),
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
