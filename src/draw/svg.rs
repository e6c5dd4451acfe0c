//! SVG output of a Schlegel diagram: faces as filled paths, bonds as lines, optional atom
//! labels, a legend and the isomer ID (SVG 1.1, W3C Recommendation 2011). The screening caution
//! travels as the document's `<desc>` (not drawn: the command prints it once on stderr).
//!
//! Layout (where atoms go) comes from `schlegel.rs`; the values used for colouring come from
//! `score::bonds`. A derivative's marked bonds are wide `<path class="site-bond">` strokes under
//! the bonds, its marked atoms `<circle class="site">` dots over them (under any labels). Every
//! face is one `<path class="face">`; the outer face, which in a Schlegel diagram is the region
//! around the drawing, is a ring between a frame and the boundary polygon.

use std::fmt::Write as _;
use std::io::{self, Write};

/// Drawing area in SVG user units (the legend and captions sit below it).
const SIZE: f64 = 640.0;
const MARGIN: f64 = 40.0;
const CAPTION_HEIGHT: f64 = 70.0;

/// What a colour encodes.
#[derive(Debug, Clone, PartialEq)]
pub enum Colours {
    /// Pentagons filled, other faces by size.
    Faces,
    /// Each bond coloured by its value (Pauling bond order).
    Bonds(Vec<f64>),
    /// Each face filled by its value (ring pi-electron content).
    FaceValues(Vec<f64>),
}

/// Everything needed to draw one diagram.
pub struct Picture<'a> {
    pub title: &'a str,
    pub caution: &'a str,
    pub points: &'a [[f64; 2]],
    pub faces: &'a [Vec<u32>],
    pub outer: usize,
    pub edges: &'a [[u32; 2]],
    pub colours: Colours,
    pub labels: bool,
    /// A derivative's sites to mark, if any.
    pub marks: Option<&'a super::Marks>,
}

/// Colour of marked sites: a strong blue, apart from the pentagon fill and the bond-order
/// scale's teal and yellow.
const SITE_COLOUR: &str = "#1d4ed8";

fn to_screen(p: [f64; 2]) -> [f64; 2] {
    let r = SIZE / 2.0 - MARGIN;
    [SIZE / 2.0 + r * p[0], SIZE / 2.0 - r * p[1]]
}

fn polygon(points: &[[f64; 2]], cycle: &[u32]) -> String {
    let mut d = String::new();
    for (i, &v) in cycle.iter().enumerate() {
        let [x, y] = to_screen(points[v as usize]);
        let _ = write!(d, "{}{x:.2},{y:.2} ", if i == 0 { "M" } else { "L" });
    }
    d.push('Z');
    d
}

/// A frame around the whole drawing; with the even-odd fill rule the frame plus the boundary
/// polygon make a ring, whatever their orientations.
fn frame() -> String {
    let (lo, hi) = (MARGIN / 4.0, SIZE - MARGIN / 4.0);
    format!("M{lo},{lo} L{hi},{lo} L{hi},{hi} L{lo},{hi} Z ")
}

/// Ring sizes with a colour and legend name of their own; any other size is "other ring".
const NAMED_SIZES: [(usize, &str); 4] = [
    (4, "square"),
    (5, "pentagon"),
    (6, "hexagon"),
    (7, "heptagon"),
];

/// Size colours: pentagons strong, hexagons pale, squares green, heptagons violet, anything
/// else grey-blue (chosen to stay apart for common colour-vision deficiencies as far as four
/// hues allow; common practice, no source).
fn size_colour(size: usize) -> &'static str {
    match size {
        4 => "#8ab17d",
        5 => "#e76f51",
        6 => "#f1f5f9",
        7 => "#7b61c4",
        _ => "#b8c4d6",
    }
}

/// Legend entries of the ring sizes the picture has: (colour, name), squares to heptagons,
/// then "other ring" if any face has another size.
fn size_legend(faces: &[Vec<u32>]) -> Vec<(&'static str, &'static str)> {
    let has = |size: usize| faces.iter().any(|f| f.len() == size);
    let mut out: Vec<(&'static str, &'static str)> = NAMED_SIZES
        .iter()
        .filter(|&&(size, _)| has(size))
        .map(|&(size, name)| (size_colour(size), name))
        .collect();
    if faces.iter().any(|f| !(4..=7).contains(&f.len())) {
        out.push((size_colour(0), "other ring"));
    }
    out
}

/// Linear three-stop scale (pale yellow → teal → dark blue) for t in [0, 1].
fn scale_colour(t: f64) -> String {
    let stops = [
        [255.0, 237.0, 160.0],
        [42.0, 157.0, 143.0],
        [29.0, 53.0, 87.0],
    ];
    let t = if t.is_finite() {
        t.clamp(0.0, 1.0)
    } else {
        0.0
    };
    let (a, b, u) = if t < 0.5 {
        (stops[0], stops[1], t * 2.0)
    } else {
        (stops[1], stops[2], t * 2.0 - 1.0)
    };
    let c: Vec<u8> = (0..3)
        .map(|i| (a[i] + (b[i] - a[i]) * u).round() as u8)
        .collect();
    format!("#{:02x}{:02x}{:02x}", c[0], c[1], c[2])
}

fn range(values: &[f64]) -> (f64, f64) {
    let lo = values.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    (lo, hi)
}

fn normalise(v: f64, (lo, hi): (f64, f64)) -> f64 {
    if hi - lo > 1e-12 {
        (v - lo) / (hi - lo)
    } else {
        0.5
    }
}

/// Escapes text for XML content and attribute values.
pub fn escape(text: &str) -> String {
    text.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// Writes the complete SVG document.
pub fn write(w: &mut impl Write, p: &Picture<'_>) -> io::Result<()> {
    let height = SIZE + CAPTION_HEIGHT;
    writeln!(w, r#"<?xml version="1.0" encoding="UTF-8"?>"#)?;
    writeln!(
        w,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{SIZE}" height="{height}" viewBox="0 0 {SIZE} {height}" font-family="sans-serif">"#
    )?;
    writeln!(w, "<title>{}</title>", escape(p.title))?;
    writeln!(w, "<desc>{}</desc>", escape(p.caution))?;
    writeln!(
        w,
        r##"<rect x="0" y="0" width="{SIZE}" height="{height}" fill="#ffffff"/>"##
    )?;
    write_faces(w, p)?;
    write_site_bonds(w, p)?;
    write_bonds(w, p)?;
    write_site_atoms(w, p)?;
    write_atoms(w, p)?;
    write_captions(w, p)?;
    writeln!(w, "</svg>")
}

fn face_fill(p: &Picture<'_>, f: usize) -> String {
    match &p.colours {
        Colours::FaceValues(values) => scale_colour(normalise(values[f], range(values))),
        Colours::Bonds(_) if p.faces[f].len() == 5 => "#f6c9bb".to_string(),
        Colours::Bonds(_) => "#ffffff".to_string(),
        Colours::Faces => size_colour(p.faces[f].len()).to_string(),
    }
}

fn write_faces(w: &mut impl Write, p: &Picture<'_>) -> io::Result<()> {
    writeln!(w, r#"<g id="faces" stroke="none">"#)?;
    for (f, cycle) in p.faces.iter().enumerate() {
        let mut d = polygon(p.points, cycle);
        let mut extra = String::new();
        if f == p.outer {
            d = frame() + &d;
            extra.push_str(r#" fill-rule="evenodd""#);
        }
        let pentagon_mark = if cycle.len() == 5 && matches!(p.colours, Colours::FaceValues(_)) {
            r##" stroke="#c0392b" stroke-width="3""##
        } else {
            ""
        };
        writeln!(
            w,
            r#"<path class="face" data-face="{f}" data-size="{}" d="{d}" fill="{}"{extra}{pentagon_mark}/>"#,
            cycle.len(),
            face_fill(p, f)
        )?;
    }
    writeln!(w, "</g>")
}

fn write_bonds(w: &mut impl Write, p: &Picture<'_>) -> io::Result<()> {
    writeln!(w, r#"<g id="bonds" stroke-linecap="round">"#)?;
    let values = match &p.colours {
        Colours::Bonds(v) => Some((v, range(v))),
        _ => None,
    };
    for (e, &[a, b]) in p.edges.iter().enumerate() {
        let [x1, y1] = to_screen(p.points[a as usize]);
        let [x2, y2] = to_screen(p.points[b as usize]);
        let (colour, width) = match values {
            Some((v, r)) => {
                let t = normalise(v[e], r);
                (scale_colour(t), 1.5 + 3.0 * t)
            }
            None => ("#1f2937".to_string(), 1.6),
        };
        writeln!(
            w,
            r#"<line class="bond" data-edge="{e}" x1="{x1:.2}" y1="{y1:.2}" x2="{x2:.2}" y2="{y2:.2}" stroke="{colour}" stroke-width="{width:.2}"/>"#
        )?;
    }
    writeln!(w, "</g>")
}

fn write_site_bonds(w: &mut impl Write, p: &Picture<'_>) -> io::Result<()> {
    let Some(marks) = p.marks.filter(|m| !m.bonds.is_empty()) else {
        return Ok(());
    };
    writeln!(
        w,
        r#"<g id="site-bonds" stroke="{SITE_COLOUR}" stroke-width="9" stroke-linecap="round" stroke-opacity="0.75">"#
    )?;
    for &e in &marks.bonds {
        let Some(&[a, b]) = p.edges.get(e as usize) else {
            continue;
        };
        let [x1, y1] = to_screen(p.points[a as usize]);
        let [x2, y2] = to_screen(p.points[b as usize]);
        writeln!(
            w,
            r#"<path class="site-bond" data-edge="{e}" d="M{x1:.2},{y1:.2} L{x2:.2},{y2:.2}"/>"#
        )?;
    }
    writeln!(w, "</g>")
}

fn write_site_atoms(w: &mut impl Write, p: &Picture<'_>) -> io::Result<()> {
    let Some(marks) = p.marks.filter(|m| !m.atoms.is_empty()) else {
        return Ok(());
    };
    // Bridge ends get smaller dots than substituted or added-to atoms, so the bond stays the
    // visible mark; with labels every dot is a ring wider than the label's white disc.
    let radius = match (marks.bonds.is_empty(), p.labels) {
        (true, false) => 7.0,
        (true, true) => 8.0,
        (false, false) => 4.5,
        (false, true) => 7.0,
    };
    writeln!(
        w,
        r##"<g id="site-atoms" fill="{SITE_COLOUR}" stroke="#ffffff" stroke-width="1">"##
    )?;
    for &v in &marks.atoms {
        let Some(&pt) = p.points.get(v as usize) else {
            continue;
        };
        let [x, y] = to_screen(pt);
        writeln!(
            w,
            r#"<circle class="site" data-atom="{}" cx="{x:.2}" cy="{y:.2}" r="{radius}"/>"#,
            v + 1
        )?;
    }
    writeln!(w, "</g>")
}

fn write_atoms(w: &mut impl Write, p: &Picture<'_>) -> io::Result<()> {
    if !p.labels {
        return Ok(());
    }
    writeln!(
        w,
        r##"<g id="labels" font-size="8" fill="#111827" text-anchor="middle">"##
    )?;
    for (v, &pt) in p.points.iter().enumerate() {
        let [x, y] = to_screen(pt);
        writeln!(
            w,
            r##"<circle cx="{x:.2}" cy="{y:.2}" r="5" fill="#ffffff" stroke="#1f2937" stroke-width="0.6"/>"##
        )?;
        writeln!(w, r#"<text x="{x:.2}" y="{:.2}">{}</text>"#, y + 2.8, v + 1)?;
    }
    writeln!(w, "</g>")
}

fn write_captions(w: &mut impl Write, p: &Picture<'_>) -> io::Result<()> {
    let y0 = SIZE + 10.0;
    writeln!(w, r##"<g id="legend" font-size="12" fill="#111827">"##)?;
    writeln!(
        w,
        r#"<text x="16" y="{:.1}" font-size="16" font-weight="bold">{}</text>"#,
        y0 + 8.0,
        escape(p.title)
    )?;
    let mut sites_x = 220.0;
    match &p.colours {
        Colours::Faces => {
            let mut x = 16.0;
            for (colour, name) in size_legend(p.faces) {
                legend_swatch(w, x, y0 + 22.0, colour, name)?;
                x += 104.0;
            }
            sites_x = x + 6.0;
        }
        Colours::Bonds(v) => legend_scale(w, y0 + 22.0, "Pauling bond order", range(v))?,
        Colours::FaceValues(v) => legend_scale(
            w,
            y0 + 22.0,
            "ring pi-electron content (pentagons outlined red)",
            range(v),
        )?,
    }
    // Beside the ring swatches; under a colour scale, right of its end value.
    if let Some(marks) = p.marks {
        match p.colours {
            Colours::Faces => legend_sites(w, sites_x, y0 + 22.0, marks)?,
            _ => legend_sites(w, 220.0, y0 + 40.0, marks)?,
        }
    }
    writeln!(w, "</g>")
}

/// The marked sites' legend entry: a dot for atoms or a stroke for bonds, and the text.
fn legend_sites(w: &mut impl Write, x: f64, y: f64, marks: &super::Marks) -> io::Result<()> {
    if marks.bonds.is_empty() {
        writeln!(
            w,
            r#"<circle cx="{}" cy="{}" r="7" fill="{SITE_COLOUR}"/>"#,
            x + 8.0,
            y + 8.0
        )?;
    } else {
        writeln!(
            w,
            r#"<path d="M{x},{} L{},{}" stroke="{SITE_COLOUR}" stroke-width="9" stroke-linecap="round" stroke-opacity="0.75"/>"#,
            y + 8.0,
            x + 16.0,
            y + 8.0
        )?;
    }
    writeln!(
        w,
        r#"<text class="site-legend" x="{}" y="{}">{}</text>"#,
        x + 24.0,
        y + 13.0,
        escape(&marks.legend)
    )
}

fn legend_swatch(w: &mut impl Write, x: f64, y: f64, colour: &str, label: &str) -> io::Result<()> {
    writeln!(
        w,
        r##"<rect x="{x}" y="{y}" width="16" height="16" fill="{colour}" stroke="#1f2937" stroke-width="0.8"/>"##
    )?;
    writeln!(
        w,
        r#"<text x="{}" y="{}">{}</text>"#,
        x + 22.0,
        y + 13.0,
        escape(label)
    )
}

fn legend_scale(w: &mut impl Write, y: f64, label: &str, (lo, hi): (f64, f64)) -> io::Result<()> {
    for i in 0..20 {
        let t = i as f64 / 19.0;
        writeln!(
            w,
            r#"<rect x="{:.1}" y="{y}" width="8" height="16" fill="{}"/>"#,
            16.0 + 8.0 * i as f64,
            scale_colour(t)
        )?;
    }
    writeln!(w, r#"<text x="16" y="{}">{lo:.3}</text>"#, y + 30.0)?;
    writeln!(w, r#"<text x="150" y="{}">{hi:.3}</text>"#, y + 30.0)?;
    writeln!(
        w,
        r#"<text x="190" y="{}">{}</text>"#,
        y + 13.0,
        escape(label)
    )
}
