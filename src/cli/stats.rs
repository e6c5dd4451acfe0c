//! `cagerank stats`: what a catalogue holds per size, with text histograms of the main
//! descriptors (and the same charts as SVG with `--svg FILE`). Counting is done by
//! `catalogue::stats`; this file only draws.

use super::output::{counted, write_line, Out};
use super::query::{catalogue_dir, catalogue_error};
use super::CliError;
use cagerank::catalogue::format::write_atomic;
use cagerank::catalogue::stats::{catalogue_stats, FileStats, Histogram};
use std::fmt::Write as _;
use std::path::PathBuf;

/// Width of the longest text bar, in characters.
const BAR: usize = 40;

/// Summarise a catalogue: sizes held, counts and descriptor distributions.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// Catalogue directory [default: $CAGERANK_CATALOGUE, else ./catalogues, else the catalogue shipped with this build].
    #[arg(long, value_name = "DIR")]
    pub catalogue: Option<PathBuf>,
    /// Also draw the histograms into this SVG file.
    #[arg(long, value_name = "FILE")]
    pub svg: Option<PathBuf>,
    /// Show the runs made for this cage charge (default: the neutral runs; other charges held
    /// are listed at the end).
    #[command(flatten)]
    pub charge: super::ChargeArg,
}

pub fn run(args: Args) -> Result<(), CliError> {
    let dir = catalogue_dir(&args.catalogue);
    let everything = catalogue_stats(&dir).map_err(catalogue_error)?;
    let want = args.charge.charge;
    let (all, others): (Vec<FileStats>, Vec<FileStats>) =
        everything.into_iter().partition(|s| s.info.charge == want);
    let mut out = Out::stdout();
    if all.is_empty() {
        let which = if want == 0 {
            String::new()
        } else {
            format!(" for charge {want:+}")
        };
        write_line(
            &mut out,
            &format!("no data files{which} in {}", dir.display()),
        )?;
    }
    for s in &all {
        for line in text_block(s) {
            write_line(&mut out, &line)?;
        }
    }
    if let Some(line) = other_charges(&others) {
        write_line(&mut out, &line)?;
    }
    out.finish()?;
    if let Some(path) = &args.svg {
        write_atomic(path, svg(&all).as_bytes()).map_err(|e| CliError::failed(e.to_string()))?;
    }
    Ok(())
}

fn bar(count: u64, max: u64) -> String {
    let len = if max == 0 {
        0
    } else {
        (count as f64 / max as f64 * BAR as f64).ceil() as usize
    };
    "#".repeat(len)
}

fn text_block(s: &FileStats) -> Vec<String> {
    let shard = s
        .info
        .shard
        .map_or(String::new(), |k| format!(" [shard {k}]"));
    let mut lines = vec![format!(
        "{}{shard}: charge {}, {}, {} IPR, {} chiral",
        s.info.label(),
        charge_text(s.info.charge),
        counted(s.records, "isomer", "isomers"),
        s.ipr,
        s.chiral
    )];
    if s.records == 0 {
        lines.push(String::new());
        return lines;
    }
    lines.push("  pentagon adjacencies".into());
    let max = s.pentagon_adjacencies.values().copied().max().unwrap_or(0);
    for (k, n) in &s.pentagon_adjacencies {
        lines.push(format!("  {k:>6} |{:<BAR$} {n}", bar(*n, max)));
    }
    let odd = (i64::from(s.info.atoms) - i64::from(s.info.charge)) % 2 != 0;
    let gap = if odd {
        "SOMO-LUMO gap (|beta|)"
    } else {
        "HOMO-LUMO gap (|beta|)"
    };
    histogram_lines(&mut lines, gap, &s.gap);
    histogram_lines(&mut lines, "hexagon strain", &s.strain);
    let list = |m: &std::collections::BTreeMap<&str, u64>| {
        m.iter()
            .map(|(k, n)| format!("{k} {n}"))
            .collect::<Vec<_>>()
            .join(", ")
    };
    lines.push(format!("  point groups: {}", list(&s.point_groups)));
    lines.push(format!("  shells: {}", list(&s.shells)));
    lines.push(String::new());
    lines
}

/// A histogram as text bars; one line when every value is the same (nothing to spread).
fn histogram_lines(lines: &mut Vec<String>, title: &str, h: &Histogram) {
    let total: u64 = h.counts.iter().sum();
    if total == 0 {
        return;
    }
    if h.max <= h.min {
        lines.push(format!("  {title}: all {:.3}", h.min));
        return;
    }
    lines.push(format!("  {title}"));
    let max = h.counts.iter().copied().max().unwrap_or(0);
    for (i, n) in h.counts.iter().enumerate() {
        let range = format!("{:.3}..{:.3}", h.edge(i), h.edge(i + 1));
        lines.push(format!("  {range:>15} |{:<BAR$} {n}", bar(*n, max)));
    }
}

/// "0", "-6", "+2".
fn charge_text(q: i32) -> String {
    if q == 0 {
        "0".to_string()
    } else {
        format!("{q:+}")
    }
}

/// One line naming the charges of the runs not shown, if any.
fn other_charges(others: &[FileStats]) -> Option<String> {
    let mut counts = std::collections::BTreeMap::<i32, u64>::new();
    for s in others {
        *counts.entry(s.info.charge).or_default() += 1;
    }
    let first = *counts.keys().next()?;
    let list: Vec<String> = counts
        .iter()
        .map(|(q, n)| {
            format!(
                "charge {} ({})",
                charge_text(*q),
                counted(*n, "file", "files")
            )
        })
        .collect();
    Some(format!(
        "also held: {}; show them with --charge {first}",
        list.join(", ")
    ))
}

/// Bar charts, one row of three per data file: pentagon adjacencies, gap, strain.
fn svg(all: &[FileStats]) -> String {
    let (w, h) = (260.0, 160.0);
    let mut body = String::new();
    for (row, s) in all.iter().enumerate() {
        let y = row as f64 * (h + 40.0) + 30.0;
        let _ = writeln!(
            body,
            r#"<text x="10" y="{:.0}" font-size="14">{}</text>"#,
            y - 8.0,
            s.info.label()
        );
        let pa: Vec<(String, u64)> = s
            .pentagon_adjacencies
            .iter()
            .map(|(k, n)| (k.to_string(), *n))
            .collect();
        chart(&mut body, 10.0, y, w, h, "pentagon adjacencies", &pa);
        chart(&mut body, 20.0 + w, y, w, h, "HOMO-LUMO gap", &bins(&s.gap));
        chart(
            &mut body,
            30.0 + 2.0 * w,
            y,
            w,
            h,
            "hexagon strain",
            &bins(&s.strain),
        );
    }
    let total_h = all.len().max(1) as f64 * (h + 40.0) + 20.0;
    format!(
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{:.0}\" height=\"{total_h:.0}\" \
         font-family=\"sans-serif\">\n<rect width=\"100%\" height=\"100%\" fill=\"white\"/>\n{body}</svg>\n",
        40.0 + 3.0 * w
    )
}

fn bins(h: &Histogram) -> Vec<(String, u64)> {
    h.counts
        .iter()
        .enumerate()
        .map(|(i, n)| (format!("{:.2}", h.edge(i)), *n))
        .collect()
}

fn chart(out: &mut String, x: f64, y: f64, w: f64, h: f64, title: &str, bars: &[(String, u64)]) {
    let _ = writeln!(
        out,
        r#"<rect x="{x:.1}" y="{y:.1}" width="{w:.1}" height="{h:.1}" fill="none" stroke="gray"/>"#
    );
    let _ = writeln!(
        out,
        r#"<text x="{:.1}" y="{:.1}" font-size="11">{title}</text>"#,
        x + 4.0,
        y + 12.0
    );
    let max = bars.iter().map(|b| b.1).max().unwrap_or(0).max(1) as f64;
    let slot = w / bars.len().max(1) as f64;
    let plot = h - 34.0;
    for (i, (label, n)) in bars.iter().enumerate() {
        let bh = *n as f64 / max * plot;
        let bx = x + i as f64 * slot + 1.0;
        let by = y + 18.0 + plot - bh;
        let _ = writeln!(
            out,
            r#"<rect x="{bx:.1}" y="{by:.1}" width="{:.1}" height="{bh:.1}" fill="steelblue"><title>{label}: {n}</title></rect>"#,
            (slot - 2.0).max(1.0)
        );
    }
    if let (Some(first), Some(last)) = (bars.first(), bars.last()) {
        let _ = writeln!(
            out,
            r#"<text x="{:.1}" y="{:.1}" font-size="9">{}</text>"#,
            x + 2.0,
            y + h - 4.0,
            first.0
        );
        let _ = writeln!(
            out,
            r#"<text x="{:.1}" y="{:.1}" font-size="9" text-anchor="end">{}</text>"#,
            x + w - 2.0,
            y + h - 4.0,
            last.0
        );
    }
}
