//! Schlegel drawings: the SVG is well-formed XML, no two drawn bonds cross, every face is drawn
//! exactly once, and the outer face is the most symmetric one.

use cagerank::cage::Cage;
use cagerank::draw::{self, schlegel, Colouring, OuterFace};
use cagerank::spiral::{canonical_spiral, Spiral};

// from memory: Fowler & Manolopoulos, An Atlas of Fullerenes (1995): C60-Ih and C70-D5h spirals.
const C60: [u64; 12] = [1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32];
const C70: [u64; 12] = [1, 7, 9, 11, 13, 15, 27, 29, 31, 33, 35, 37];

fn cage(atoms: u64, pentagons: &[u64]) -> Cage {
    Spiral::from_pentagon_indices(atoms, pentagons)
        .unwrap()
        .to_cage()
}

fn svg_of(cage: &Cage, options: draw::Options) -> String {
    let autos = canonical_spiral(cage).unwrap().automorphisms;
    let mut out = Vec::new();
    draw::schlegel_svg(&mut out, cage, &autos, "test & <title>", options).unwrap();
    String::from_utf8(out).unwrap()
}

/// A tiny well-formedness check (XML 1.0, W3C 2008, section 2.1 in spirit): tags nest and close,
/// attribute values are quoted, no raw `<` or `&` outside markup and entities.
fn check_well_formed(text: &str) {
    let mut stack: Vec<String> = Vec::new();
    let mut rest = text;
    let mut roots = 0;
    while let Some(open) = rest.find('<') {
        check_text(&rest[..open]);
        let close = rest[open..].find('>').expect("unclosed tag") + open;
        let tag = &rest[open + 1..close];
        rest = &rest[close + 1..];
        if tag.starts_with('?') {
            assert!(tag.ends_with('?'));
            continue;
        }
        if let Some(name) = tag.strip_prefix('/') {
            assert_eq!(
                stack.pop().as_deref(),
                Some(name.trim()),
                "mismatched </{name}>"
            );
            continue;
        }
        let self_closing = tag.ends_with('/');
        let body = tag.trim_end_matches('/');
        let name = body.split_whitespace().next().expect("tag name");
        check_attributes(&body[name.len()..]);
        if stack.is_empty() {
            roots += 1;
        }
        if !self_closing {
            stack.push(name.to_string());
        }
    }
    check_text(rest);
    assert!(stack.is_empty(), "unclosed elements {stack:?}");
    assert_eq!(roots, 1);
}

fn check_text(text: &str) {
    let mut rest = text;
    while let Some(amp) = rest.find('&') {
        let semi = rest[amp..].find(';').expect("unterminated entity") + amp;
        assert!(["&amp;", "&lt;", "&gt;", "&quot;", "&apos;"].contains(&&rest[amp..=semi]));
        rest = &rest[semi + 1..];
    }
}

fn check_attributes(mut attrs: &str) {
    loop {
        attrs = attrs.trim_start();
        if attrs.is_empty() {
            return;
        }
        let eq = attrs.find('=').expect("attribute without value");
        assert!(!attrs[..eq].trim().contains(char::is_whitespace));
        let value = &attrs[eq + 1..];
        assert!(value.starts_with('"'), "unquoted attribute in {attrs}");
        let end = value[1..].find('"').expect("unterminated attribute") + 1;
        check_text(&value[1..end]);
        assert!(!value[1..end].contains('<'));
        attrs = &value[end + 1..];
    }
}

fn attr(tag: &str, name: &str) -> f64 {
    let key = format!(" {name}=\"");
    let start = tag.find(&key).unwrap() + key.len();
    let end = tag[start..].find('"').unwrap() + start;
    tag[start..end].parse().unwrap()
}

fn lines(svg: &str) -> Vec<[f64; 4]> {
    svg.lines()
        .filter(|l| l.starts_with("<line class=\"bond\""))
        .map(|l| [attr(l, "x1"), attr(l, "y1"), attr(l, "x2"), attr(l, "y2")])
        .collect()
}

fn cross(o: [f64; 2], a: [f64; 2], b: [f64; 2]) -> f64 {
    (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0])
}

/// Whether two segments that share no endpoint intersect, touching included (orientation
/// tests with the collinear special cases; de Berg et al., Computational Geometry, 3rd ed. 2008,
/// section 2.1).
fn segments_cross(s: [f64; 4], t: [f64; 4]) -> bool {
    let (p1, p2, q1, q2) = ([s[0], s[1]], [s[2], s[3]], [t[0], t[1]], [t[2], t[3]]);
    let same = |a: [f64; 2], b: [f64; 2]| (a[0] - b[0]).abs() < 1e-6 && (a[1] - b[1]).abs() < 1e-6;
    if same(p1, q1) || same(p1, q2) || same(p2, q1) || same(p2, q2) {
        return false;
    }
    let (d1, d2) = (cross(q1, q2, p1), cross(q1, q2, p2));
    let (d3, d4) = (cross(p1, p2, q1), cross(p1, p2, q2));
    if d1 * d2 < 0.0 && d3 * d4 < 0.0 {
        return true;
    }
    let on = |a: [f64; 2], b: [f64; 2], p: [f64; 2], d: f64| {
        d.abs() < 1e-9
            && p[0] >= a[0].min(b[0]) - 1e-9
            && p[0] <= a[0].max(b[0]) + 1e-9
            && p[1] >= a[1].min(b[1]) - 1e-9
            && p[1] <= a[1].max(b[1]) + 1e-9
    };
    on(q1, q2, p1, d1) || on(q1, q2, p2, d2) || on(p1, p2, q1, d3) || on(p1, p2, q2, d4)
}

fn check_drawing(cage: &Cage, options: draw::Options) {
    let svg = svg_of(cage, options);
    check_well_formed(&svg);
    let segments = lines(&svg);
    assert_eq!(segments.len(), cage.edges().len(), "every bond drawn once");
    for i in 0..segments.len() {
        for j in i + 1..segments.len() {
            assert!(
                !segments_cross(segments[i], segments[j]),
                "bonds {i} and {j} cross"
            );
        }
    }
    let mut faces: Vec<usize> = svg
        .lines()
        .filter(|l| l.starts_with("<path class=\"face\""))
        .map(|l| attr(l, "data-face") as usize)
        .collect();
    faces.sort_unstable();
    assert_eq!(
        faces,
        (0..cage.face_count()).collect::<Vec<_>>(),
        "every face drawn exactly once"
    );
    assert!(svg.contains("screening heuristics"));
}

#[test]
fn c60_c70_and_small_cages_draw_without_crossings() {
    let c20 = cage(20, &(1..=12).collect::<Vec<u64>>());
    for (c, outer) in [
        (cage(60, &C60), OuterFace::Auto),
        (cage(60, &C60), OuterFace::Hexagon),
        (cage(70, &C70), OuterFace::Auto),
        (c20, OuterFace::Pentagon),
    ] {
        for colouring in [
            Colouring::Faces,
            Colouring::BondOrders,
            Colouring::PiContent,
        ] {
            check_drawing(
                &c,
                draw::Options {
                    colouring,
                    labels: true,
                    outer,
                },
            );
        }
    }
}

#[test]
fn every_c40_isomer_draws_without_crossings() {
    use cagerank::enumerate::{enumerate, Options, Spec};
    let mut count = 0;
    enumerate(
        &Spec::fullerene(40, false).unwrap(),
        &Options::default(),
        |_, _| {},
        |iso| {
            check_drawing(&iso.spiral.to_cage(), draw::Options::default());
            count += 1;
        },
    )
    .unwrap();
    // OEIS A007894: 40 isomers of C40.
    assert_eq!(count, 40);
}

#[test]
fn outer_face_is_the_most_symmetric_of_its_kind() {
    let c60 = cage(60, &C60);
    let autos = canonical_spiral(&c60).unwrap().automorphisms;
    // Ih (order 120) acts transitively on 12 pentagons (stabiliser 120/12 = 10) and on 20
    // hexagons (stabiliser 6): Atlas of Fullerenes (1995), from memory.
    let auto = schlegel::choose_outer(&c60, &autos, OuterFace::Auto).unwrap();
    assert_eq!(c60.faces()[auto].len(), 5);
    assert_eq!(schlegel::stabiliser(auto, &autos), 10);
    let hex = schlegel::choose_outer(&c60, &autos, OuterFace::Hexagon).unwrap();
    assert_eq!(schlegel::stabiliser(hex, &autos), 6);
}

#[test]
fn asking_for_a_missing_face_kind_is_an_error() {
    let c20 = cage(20, &(1..=12).collect::<Vec<u64>>());
    let options = draw::Options {
        outer: OuterFace::Hexagon,
        ..draw::Options::default()
    };
    let err = draw::schlegel_svg(&mut Vec::new(), &c20, &[], "C20", options).unwrap_err();
    assert!(matches!(err, draw::DrawError::NoSuchFace { size: 6 }));
}

// ---- Output formats ----

use cagerank::draw::render::{self, ImageFormat, RenderError};
use cagerank::draw::svg;
use cagerank::export::CAUTION;
use std::path::{Path, PathBuf};

/// The `width` and `height` attributes of the root `<svg>` element.
fn svg_size(svg: &str) -> (f64, f64) {
    let start = svg.find("<svg").unwrap();
    let tag = &svg[start..start + svg[start..].find('>').unwrap()];
    (attr(tag, "width"), attr(tag, "height"))
}

/// Decodes a PNG with the `png` crate (an independent decoder): (width, height, RGBA rows).
fn decode_png(bytes: &[u8]) -> (u32, u32, Vec<u8>) {
    let mut decoder = png::Decoder::new(bytes);
    decoder.set_transformations(png::Transformations::EXPAND);
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).unwrap();
    assert_eq!(info.color_type, png::ColorType::Rgba);
    buf.truncate(info.buffer_size());
    (info.width, info.height, buf)
}

#[test]
fn png_has_the_signature_and_the_svg_size_times_the_scale() {
    let svg = svg_of(&cage(60, &C60), draw::Options::default());
    let out = render::render(&svg, ImageFormat::Png).unwrap();
    // PNG specification (W3C, 2003), section 5.2: the eight-byte signature.
    assert_eq!(
        out.bytes[..8],
        [0x89, b'P', b'N', b'G', 0x0d, 0x0a, 0x1a, 0x0a]
    );
    let (w, h) = svg_size(&svg);
    let (pw, ph, pixels) = decode_png(&out.bytes);
    let scale = f64::from(render::PNG_SCALE);
    assert_eq!((f64::from(pw), f64::from(ph)), (w * scale, h * scale));
    // The title is drawn in the caption strip below the diagram, left of x = 300 user units;
    // with fonts there it must leave dark pixels there, else the renderer must say it dropped
    // the text.
    let dark = (0..ph as usize)
        .filter(|&y| {
            let user_y = y as f64 / scale;
            user_y > w + 2.0 && user_y < w + 22.0
        })
        .flat_map(|y| (0..(300.0 * scale) as usize).map(move |x| (y * pw as usize + x) * 4))
        .filter(|&i| pixels[i] < 100 && pixels[i + 1] < 100 && pixels[i + 2] < 100)
        .count();
    assert!(
        out.text_dropped || dark > 50,
        "title missing: {dark} dark pixels"
    );
}

#[test]
fn pdf_is_refused_with_a_pointer_to_svg_and_png() {
    let err = ImageFormat::from_path(Path::new("c60.pdf")).unwrap_err();
    assert_eq!(err, RenderError::NoPdf);
    let message = err.to_string();
    assert!(message.contains(".svg") && message.contains(".png") && !message.contains('\n'));
}

#[test]
fn the_caution_is_metadata_not_part_of_the_picture() {
    let svg = svg_of(&cage(60, &C60), draw::Options::default());
    assert!(svg.contains(&format!("<desc>{}</desc>", svg::escape(CAUTION))));
    let drawn: Vec<&str> = svg
        .split("<text")
        .skip(1)
        .map(|t| &t[t.find('>').unwrap() + 1..t.find("</text>").unwrap()])
        .collect();
    assert!(drawn.iter().all(|t| !t.contains("screening")), "{drawn:?}");
}

#[test]
fn only_known_extensions_name_a_format() {
    for (name, format) in [("x.svg", ImageFormat::Svg), ("dir/X.PNG", ImageFormat::Png)] {
        assert_eq!(ImageFormat::from_path(Path::new(name)), Ok(format));
    }
    for name in ["x.jpg", "x", "x.svg.bak", ".png", "x.pdf.txt"] {
        assert!(
            matches!(
                ImageFormat::from_path(Path::new(name)),
                Err(RenderError::UnknownExtension { .. })
            ),
            "{name}"
        );
    }
}

use crate::common::cagerank;

fn temp(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("cagerank-draw-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

#[test]
fn command_line_writes_the_format_the_extension_asks_for() {
    let dir = temp("cli");
    let png_path = dir.join("c60.png");
    let (code, _, err) = cagerank(&["draw", "C60:IPR-1", "-o", png_path.to_str().unwrap()]);
    assert_eq!(code, 0, "{err}");
    let bytes = std::fs::read(&png_path).unwrap();
    assert!(bytes.starts_with(&[0x89, b'P', b'N', b'G']));
    assert_eq!(
        err.matches("screening heuristics").count(),
        1,
        "caution once: {err}"
    );
    let svg_path = dir.join("c60.svg");
    let (code, _, err) = cagerank(&["draw", "C60:IPR-1", "-o", svg_path.to_str().unwrap()]);
    assert_eq!(code, 0, "{err}");
    let svg = std::fs::read_to_string(&svg_path).unwrap();
    assert!(
        svg.contains("<title>C60:IPR-1 = C60:all-1812  spiral"),
        "{svg}"
    );
    let (w, h) = svg_size(&svg);
    let (pw, ph, _) = decode_png(&bytes);
    assert_eq!((f64::from(pw), f64::from(ph)), (2.0 * w, 2.0 * h));
    // An extension that names no supported format is refused before any work, in one line.
    let jpg = dir.join("c60.jpg");
    let (code, out, err) = cagerank(&["draw", "C60:IPR-1", "-o", jpg.to_str().unwrap()]);
    assert_eq!(code, 2, "{err}");
    assert!(out.is_empty() && !jpg.exists());
    assert_eq!(err.trim().lines().count(), 1, "{err}");
    assert!(err.contains(".svg, .png"), "{err}");
    let pdf = dir.join("c60.pdf");
    let (code, _, err) = cagerank(&["draw", "C60:IPR-1", "-o", pdf.to_str().unwrap()]);
    assert_eq!(code, 2, "{err}");
    assert!(
        !pdf.exists() && err.contains("PDF output is not built in"),
        "{err}"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn marked_sites_are_drawn_once_each_without_disturbing_the_drawing() {
    // A derivative's sites on its parent: one dot per marked atom, one stroke per marked bond,
    // drawn at the atoms' and bonds' own positions; the bonds still never cross and the
    // document stays well-formed.
    let c60 = cage(60, &C60);
    let autos = canonical_spiral(&c60).unwrap().automorphisms;
    let marks = draw::Marks {
        atoms: vec![0, 8],
        bonds: vec![3],
        legend: "2 H addends & <more>".to_string(),
    };
    let mut out = Vec::new();
    draw::schlegel_svg_marked(
        &mut out,
        &c60,
        &autos,
        "C60:IPR-1+2H:5",
        draw::Options {
            labels: true,
            ..draw::Options::default()
        },
        Some(&marks),
    )
    .unwrap();
    let svg = String::from_utf8(out).unwrap();
    check_well_formed(&svg);
    let segments = lines(&svg);
    assert_eq!(segments.len(), c60.edges().len());
    for i in 0..segments.len() {
        for j in i + 1..segments.len() {
            assert!(!segments_cross(segments[i], segments[j]));
        }
    }
    let dots: Vec<&str> = svg
        .lines()
        .filter(|l| l.starts_with("<circle class=\"site\""))
        .collect();
    assert_eq!(dots.len(), 2);
    let outer = schlegel::choose_outer(&c60, &autos, OuterFace::Auto).unwrap();
    let points = schlegel::embed(&c60, outer);
    // Screen position of atom v: the same affine map for dots and bond ends, so a dot sits on
    // the end of every bond of its atom.
    for (dot, v) in dots.iter().zip([0usize, 8]) {
        assert_eq!(attr(dot, "data-atom") as usize, v + 1);
        let (x, y) = (attr(dot, "cx"), attr(dot, "cy"));
        let e = c60
            .edges()
            .iter()
            .position(|&[a, b]| a as usize == v || b as usize == v)
            .unwrap();
        let s = segments[e];
        let at_end = |px: f64, py: f64| (px - x).abs() < 0.02 && (py - y).abs() < 0.02;
        assert!(
            at_end(s[0], s[1]) || at_end(s[2], s[3]),
            "dot {v} off its bonds"
        );
        assert!(points[v][0].is_finite());
    }
    let strokes: Vec<&str> = svg
        .lines()
        .filter(|l| l.starts_with("<path class=\"site-bond\""))
        .collect();
    assert_eq!(strokes.len(), 1);
    let [x1, y1, x2, y2] = segments[3];
    assert!(strokes[0].contains(&format!("d=\"M{x1:.2},{y1:.2} L{x2:.2},{y2:.2}\"")));
    assert!(svg.contains(">2 H addends &amp; &lt;more&gt;</text>"));
    // Unmarked drawings have none of it.
    let plain = svg_of(&c60, draw::Options::default());
    assert!(!plain.contains("class=\"site") && !plain.contains("site-legend"));
}
