//! Turning the SVG of a drawing into the file format its name asks for: SVG as written, or PNG
//! rasterised by resvg (which reads the SVG through usvg, so both show the same picture). PDF is
//! refused with a pointer to SVG and PNG: the one pure-Rust converter (svg2pdf) took about 170 s
//! of CPU to compile on the project's machine, twice resvg's 87 s, for a format any SVG tool
//! produces.
//!
//! Text needs fonts. The system's fonts are loaded and the SVG's generic `sans-serif` family is
//! pointed at one that exists (usvg would otherwise look for Arial and drop text it cannot set);
//! when the system has no fonts at all the picture is drawn without text and [`Rendered`] says
//! so, so the caller can tell the user. Nothing is bundled. Laying out the drawing is left to
//! [`super::svg`], writing the file to the caller.

use resvg::tiny_skia;
use resvg::usvg::{self, fontdb};
use std::fmt;
use std::path::Path;

/// Pixels per SVG user unit in PNG output: twice the SVG's nominal size, sharp enough for
/// slides and papers (common practice, no source).
pub const PNG_SCALE: f32 = 2.0;

/// Families tried, in order, for the SVG's `sans-serif`.
const SANS_FAMILIES: [&str; 6] = [
    "DejaVu Sans",
    "Liberation Sans",
    "Noto Sans",
    "Arial",
    "Helvetica",
    "FreeSans",
];

/// File formats a drawing can be written in.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ImageFormat {
    Svg,
    Png,
}

/// The extensions accepted, for messages.
pub const EXTENSIONS: &str = ".svg, .png";

impl ImageFormat {
    /// The format a file name asks for by its extension (case-insensitive).
    pub fn from_path(path: &Path) -> Result<ImageFormat, RenderError> {
        let ext = path
            .extension()
            .and_then(|e| e.to_str())
            .map(str::to_ascii_lowercase);
        match ext.as_deref() {
            Some("svg") => Ok(ImageFormat::Svg),
            Some("png") => Ok(ImageFormat::Png),
            Some("pdf") => Err(RenderError::NoPdf),
            _ => Err(RenderError::UnknownExtension {
                name: path.display().to_string(),
            }),
        }
    }
}

/// Why a drawing could not be turned into the asked format.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum RenderError {
    UnknownExtension {
        name: String,
    },
    /// PDF output is not built in.
    NoPdf,
    /// The SVG could not be read back (a bug in the SVG writer) or converted.
    Convert(String),
}

impl fmt::Display for RenderError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            RenderError::UnknownExtension { name } => write!(
                f,
                "cannot tell the image format of '{}' from its extension; name the file with one of {EXTENSIONS}",
                crate::id::printable(name)
            ),
            RenderError::NoPdf => write!(
                f,
                "PDF output is not built in; write .svg (vector: any SVG tool, e.g. rsvg-convert -f pdf, turns it into PDF) or .png"
            ),
            RenderError::Convert(e) => write!(f, "cannot convert the drawing: {e}"),
        }
    }
}

impl std::error::Error for RenderError {}

/// A converted drawing.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Rendered {
    pub bytes: Vec<u8>,
    /// True when the picture has text but no font could be found to draw it, so it was left
    /// out (PNG only).
    pub text_dropped: bool,
}

/// The system fonts, with `sans-serif` mapped to an installed family; `None` if there are none.
fn fonts() -> Option<fontdb::Database> {
    let mut db = fontdb::Database::new();
    db.load_system_fonts();
    if db.is_empty() {
        return None;
    }
    let installed = |name: &str| {
        db.faces()
            .any(|f| f.families.iter().any(|(family, _)| family == name))
    };
    let family = SANS_FAMILIES
        .iter()
        .find(|name| installed(name))
        .map(|name| name.to_string())
        .or_else(|| {
            db.faces()
                .find_map(|f| f.families.first().map(|(family, _)| family.clone()))
        })?;
    db.set_sans_serif_family(family.clone());
    db.set_serif_family(family.clone());
    db.set_monospace_family(family);
    Some(db)
}

/// The SVG text parsed with the system fonts; the flag says there were none.
fn parse(svg: &str) -> Result<(usvg::Tree, bool), RenderError> {
    let mut options = usvg::Options::default();
    let found = fonts();
    let missing = found.is_none();
    if let Some(db) = found {
        *options.fontdb_mut() = db;
    }
    let tree =
        usvg::Tree::from_str(svg, &options).map_err(|e| RenderError::Convert(e.to_string()))?;
    Ok((tree, missing && svg.contains("<text")))
}

/// `svg` in `format`: as it is, or as PNG at [`PNG_SCALE`].
pub fn render(svg: &str, format: ImageFormat) -> Result<Rendered, RenderError> {
    match format {
        ImageFormat::Svg => Ok(Rendered {
            bytes: svg.as_bytes().to_vec(),
            text_dropped: false,
        }),
        ImageFormat::Png => {
            let (tree, text_dropped) = parse(svg)?;
            let size = tree
                .size()
                .to_int_size()
                .scale_by(PNG_SCALE)
                .ok_or_else(|| RenderError::Convert("the drawing has no size".to_string()))?;
            let mut pixmap = tiny_skia::Pixmap::new(size.width(), size.height())
                .ok_or_else(|| RenderError::Convert("the drawing is too large".to_string()))?;
            let transform = tiny_skia::Transform::from_scale(PNG_SCALE, PNG_SCALE);
            resvg::render(&tree, transform, &mut pixmap.as_mut());
            let bytes = pixmap
                .encode_png()
                .map_err(|e| RenderError::Convert(e.to_string()))?;
            Ok(Rendered {
                bytes,
                text_dropped,
            })
        }
    }
}
