//! `stillpoint plot`: pictures of a profile before it is built — its
//! profiles along the balance coordinate (`curves`), a plane of a 2D or 3D
//! grid with a colour scale and contours (`slice`), and the residual of
//! the balance over the domain (`residual`) — as PNG or SVG.
//!
//! The numbers come from the library (`data.rs`: the table, the sampler,
//! the background's exact accelerations); `draw.rs` lays them out with
//! `plotters`. Text is drawn with the embedded DejaVu Sans (licence in
//! `DejaVuSans-LICENSE.txt` beside it), so no system font or fontconfig is
//! needed; colours are viridis (`viridis.rs`).
//!
//! Owns: the plot kinds, titles, the image encodings. Does not own:
//! physics, the command line, committing the file.

mod contour;
mod data;
mod draw;
pub mod viridis;

use plotters::prelude::*;

use crate::pipeline::Error;
use crate::profile::Loaded;

/// The font every text is drawn in: DejaVu Sans (Bitstream Vera licence).
static FONT: &[u8] = include_bytes!("DejaVuSans.ttf");

/// What to draw.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Kind {
    /// ρ, P, T or c² (and for disks v_φ/v_K, 1 − v_φ/v_K, H/R) along the
    /// balance coordinate.
    Curves,
    /// One field on a plane of the grid (2D and 3D grids).
    Slice,
    /// The relative residual of the balance along the balance coordinate.
    Residual,
}

impl Kind {
    fn describe(self) -> &'static str {
        match self {
            Kind::Curves => "profiles along the balance coordinate",
            Kind::Slice => "slice",
            Kind::Residual => "residual of the balance",
        }
    }
}

/// The image format, from the file's extension.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Format {
    /// PNG, 8-bit RGB.
    Png,
    /// SVG (text as text).
    Svg,
}

impl Format {
    /// The format a file name asks for, or None.
    pub fn of(path: &std::path::Path) -> Option<Format> {
        match path
            .extension()
            .and_then(|e| e.to_str())
            .map(str::to_ascii_lowercase)
            .as_deref()
        {
            Some("png") => Some(Format::Png),
            Some("svg") => Some(Format::Svg),
            _ => None,
        }
    }
}

/// A plot to draw.
#[derive(Clone, Debug)]
pub struct Request<'a> {
    /// The kind.
    pub kind: Kind,
    /// The field of a slice (`density` when None).
    pub field: Option<&'a str>,
    /// Width and height in pixels (SVG: in user units).
    pub size: (u32, u32),
    /// The encoding.
    pub format: Format,
    /// The `--set` overrides, named in the title.
    pub overrides: &'a [(String, String)],
}

/// Most cells drawn along an axis of a slice (every k-th cell beyond).
const MAX_CELLS: usize = 200;

/// Points along the balance coordinate for curves and residuals.
const POINTS: usize = 400;

fn register_font() -> Result<(), Error> {
    static DONE: std::sync::OnceLock<bool> = std::sync::OnceLock::new();
    let ok = *DONE.get_or_init(|| {
        plotters::style::register_font(draw::FAMILY, FontStyle::Normal, FONT).is_ok()
    });
    if ok {
        Ok(())
    } else {
        Err(Error::Usage("plot: the embedded font does not load".into()))
    }
}

/// Draw the plot of `loaded` and return the encoded file.
pub fn render(loaded: &Loaded, req: &Request<'_>) -> Result<Vec<u8>, Error> {
    register_font()?;
    let (w, h) = req.size;
    match req.format {
        Format::Svg => {
            let mut text = String::new();
            {
                let root = SVGBackend::with_string(&mut text, (w, h)).into_drawing_area();
                draw_on(&root, loaded, req)?;
                root.present().map_err(fail)?;
            }
            Ok(text.into_bytes())
        }
        Format::Png => {
            let mut pixels = vec![0u8; 3 * w as usize * h as usize];
            {
                let root = BitMapBackend::with_buffer(&mut pixels, (w, h)).into_drawing_area();
                draw_on(&root, loaded, req)?;
                root.present().map_err(fail)?;
            }
            let mut out = Vec::new();
            let mut enc = png::Encoder::new(&mut out, w, h);
            enc.set_color(png::ColorType::Rgb);
            enc.set_depth(png::BitDepth::Eight);
            let mut writer = enc.write_header().map_err(fail)?;
            writer.write_image_data(&pixels).map_err(fail)?;
            writer.finish().map_err(fail)?;
            Ok(out)
        }
    }
}

fn fail(e: impl std::fmt::Display) -> Error {
    Error::Usage(format!("plot: {e}"))
}

/// The second title line: the overrides, or that there are none.
fn overridden(overrides: &[(String, String)]) -> String {
    if overrides.is_empty() {
        "parameters as in the profile (no --set)".to_string()
    } else {
        let list: Vec<String> = overrides.iter().map(|(n, v)| format!("{n}={v}")).collect();
        format!("--set {}", list.join(", "))
    }
}

fn draw_on<DB: DrawingBackend>(
    root: &DrawingArea<DB, plotters::coord::Shift>,
    loaded: &Loaded,
    req: &Request<'_>,
) -> Result<(), Error> {
    let name = &loaded.model.name;
    let mut second = overridden(req.overrides);
    match req.kind {
        Kind::Curves => {
            let (panels, caution) = data::curves(loaded, POINTS)?;
            if let Some(c) = caution {
                second = format!("{second}; {c}");
            }
            let area = draw::titled(root, &format!("{name}: {}", req.kind.describe()), &second)
                .map_err(fail)?;
            let cols = if panels.len() > 3 { 2 } else { panels.len() };
            draw::panels(&area, &panels, cols).map_err(fail)?;
        }
        Kind::Residual => {
            let (panels, note) = data::residual(loaded, POINTS)?;
            if let Some(n) = note {
                second = format!("{second}; {n}");
            }
            let area = draw::titled(root, &format!("{name}: {}", req.kind.describe()), &second)
                .map_err(fail)?;
            draw::panels(&area, &panels, panels.len()).map_err(fail)?;
        }
        Kind::Slice => {
            let field = req.field.unwrap_or("density");
            let map = data::slice(loaded, field)?;
            let (nx, ny) = (map.values.len(), map.values.first().map_or(0, Vec::len));
            let (sx, sy) = (nx.div_ceil(MAX_CELLS), ny.div_ceil(MAX_CELLS));
            let mut notes = vec![second];
            if !map.plane.is_empty() {
                notes.insert(0, map.plane.clone());
            }
            if sx > 1 || sy > 1 {
                notes.push(format!(
                    "of {nx} x {ny} cells, every {sx} along {} and every {sy} along {} drawn",
                    map.xlabel.split(' ').next().unwrap_or("x"),
                    map.ylabel.split(' ').next().unwrap_or("y")
                ));
            }
            let title = format!("{name}: {} ({}, {})", field, map.xlabel, map.ylabel);
            let area = draw::titled(root, &title, &notes.join("; ")).map_err(fail)?;
            draw::map(&area, &map, MAX_CELLS).map_err(fail)?;
        }
    }
    Ok(())
}
