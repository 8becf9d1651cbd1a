//! Drawing with `plotters` on any backend (bitmap for PNG, SVG): a title,
//! panels of curves with labelled, possibly logarithmic axes, and a colour
//! map of a plane with contours and a colour scale.
//!
//! Owns: layout, ticks, colours and text. Does not own: the numbers
//! (`data.rs`) or the file formats (`mod.rs`).

use plotters::coord::Shift;
use plotters::prelude::*;

use super::contour;
use super::data::{spans_decades, Embed, Map, Panel};
use super::viridis;

/// The family the embedded font is registered under.
pub const FAMILY: &str = "sans-serif";

/// A plotters error as text.
trait Text<T> {
    fn m(self) -> Result<T, String>;
}

impl<T, E: std::fmt::Display> Text<T> for Result<T, E> {
    fn m(self) -> Result<T, String> {
        self.map_err(|e| e.to_string())
    }
}

/// Run `$body` with `$x`, `$y` bound to the ranges, each made logarithmic
/// when asked (the four combinations are four types to plotters).
macro_rules! with_ranges {
    ($lx:expr, $ly:expr, $xr:expr, $yr:expr, |$x:ident, $y:ident| $body:block) => {
        match ($lx, $ly) {
            (false, false) => {
                let ($x, $y) = ($xr, $yr);
                $body
            }
            (true, false) => {
                let ($x, $y) = ($xr.log_scale(), $yr);
                $body
            }
            (false, true) => {
                let ($x, $y) = ($xr, $yr.log_scale());
                $body
            }
            (true, true) => {
                let ($x, $y) = ($xr.log_scale(), $yr.log_scale());
                $body
            }
        }
    };
}

/// Fill the background, write the title and a smaller second line, and
/// return the area below them.
pub fn titled<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    title: &str,
    subtitle: &str,
) -> Result<DrawingArea<DB, Shift>, String> {
    root.fill(&WHITE).m()?;
    let (w, h) = root.dim_in_pixel();
    let big = (h / 30).clamp(14, 24);
    let small = (big * 2 / 3).max(11);
    let top = 10 + big + 6 + small + 8;
    let (head, rest) = root.split_vertically(top);
    let cx = (w / 2) as i32;
    let centred = |size: u32| {
        TextStyle::from((FAMILY, size).into_font())
            .color(&BLACK)
            .pos(plotters::style::text_anchor::Pos::new(
                plotters::style::text_anchor::HPos::Center,
                plotters::style::text_anchor::VPos::Top,
            ))
    };
    head.draw(&plotters::element::Text::new(
        title.to_string(),
        (cx, 8),
        centred(big),
    ))
    .m()?;
    head.draw(&plotters::element::Text::new(
        subtitle.to_string(),
        (cx, (8 + big + 6) as i32),
        centred(small),
    ))
    .m()?;
    Ok(rest)
}

/// The range of the finite values (the positive ones on a log axis),
/// widened a little, or around the value when all are equal.
fn range(values: impl Iterator<Item = f64>, log: bool) -> Option<(f64, f64)> {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for v in values.filter(|v| v.is_finite() && (!log || *v > 0.0)) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if lo > hi {
        return None;
    }
    if log {
        let (a, b) = (lo.log10(), hi.log10());
        let pad = ((b - a) * 0.05).max(0.1);
        return Some((10f64.powf(a - pad), 10f64.powf(b + pad)));
    }
    let pad = if hi > lo {
        (hi - lo) * 0.05
    } else {
        lo.abs().max(1.0) * 0.05
    };
    Some((lo - pad, hi + pad))
}

/// A tick label: plain decimals for moderate numbers, else scientific;
/// a value a billionth of the axis `span` from zero (a rounding residue of
/// the tick positions) is 0.
pub fn tick(v: f64, span: f64) -> String {
    let a = v.abs();
    if a <= 1e-9 * span.abs() {
        "0".into()
    } else if (1e-3..1e4).contains(&a) {
        let s = format!("{v:.4}");
        let s = s.trim_end_matches('0').trim_end_matches('.');
        s.to_string()
    } else {
        format!("{v:.1e}")
    }
}

/// Draw each panel in a grid of `cols` columns.
pub fn panels<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    panels: &[Panel],
    cols: usize,
) -> Result<(), String> {
    let rows = panels.len().div_ceil(cols.max(1));
    let cells = area.split_evenly((rows, cols.max(1)));
    for (p, cell) in panels.iter().zip(&cells) {
        panel(cell, p)?;
    }
    Ok(())
}

fn panel<DB: DrawingBackend>(area: &DrawingArea<DB, Shift>, p: &Panel) -> Result<(), String> {
    let (w, h) = area.dim_in_pixel();
    let font = (h / 22).clamp(10, 16);
    let xr = range(p.xs.iter().copied(), p.log_x).unwrap_or((0.0, 1.0));
    let all = p.series.iter().flat_map(|s| s.ys.iter().copied());
    let reference = p.reference.iter().map(|r| r.0);
    let Some(yr) = range(all.chain(reference), p.log_y) else {
        // Nothing finite to draw (v_φ/v_K without gravity, say): say so.
        area.draw(&plotters::element::Text::new(
            format!("{}: not defined here", p.ylabel),
            (10, (h / 2) as i32),
            (FAMILY, font).into_font(),
        ))
        .m()?;
        return Ok(());
    };
    let colours = [RGBColor(31, 88, 160), RGBColor(200, 82, 0)];
    // Log axes never snap a tick to 0.
    let span_x = if p.log_x { 0.0 } else { xr.1 - xr.0 };
    let span_y = if p.log_y { 0.0 } else { yr.1 - yr.0 };
    with_ranges!(p.log_x, p.log_y, xr.0..xr.1, yr.0..yr.1, |x, y| {
        let mut chart = ChartBuilder::on(area)
            .margin(8)
            .margin_right((w / 25).max(8))
            .x_label_area_size(font * 3)
            .y_label_area_size(font * 5)
            .build_cartesian_2d(x, y)
            .m()?;
        chart
            .configure_mesh()
            .x_desc(p.xlabel.as_str())
            .y_desc(p.ylabel.as_str())
            .x_labels(6)
            .y_labels(6)
            .x_label_formatter(&|v| tick(*v, span_x))
            .y_label_formatter(&|v| tick(*v, span_y))
            .label_style((FAMILY, font))
            .axis_desc_style((FAMILY, font))
            .light_line_style(RGBColor(235, 235, 235))
            .draw()
            .m()?;
        for (k, s) in p.series.iter().enumerate() {
            let colour = colours[k % colours.len()];
            // A gap where a value is not finite (or not positive on a log
            // axis): the curve is broken there, never bridged.
            let mut run: Vec<(f64, f64)> = Vec::new();
            let ok = |v: f64| v.is_finite() && (!p.log_y || v > 0.0);
            let mut runs = Vec::new();
            for (&xv, &yv) in p.xs.iter().zip(&s.ys) {
                if ok(yv) {
                    run.push((xv, yv));
                } else if !run.is_empty() {
                    runs.push(std::mem::take(&mut run));
                }
            }
            runs.push(run);
            for r in runs.into_iter().filter(|r| !r.is_empty()) {
                if r.len() == 1 {
                    chart
                        .draw_series(std::iter::once(Circle::new(r[0], 2, colour.filled())))
                        .m()?;
                } else {
                    chart
                        .draw_series(LineSeries::new(r, colour.stroke_width(2)))
                        .m()?;
                }
            }
        }
        if let Some((v, label)) = &p.reference {
            let red = RGBColor(180, 30, 30);
            chart
                .draw_series(LineSeries::new(
                    [(xr.0, *v), (xr.1, *v)],
                    red.stroke_width(1),
                ))
                .m()?
                .label(label.as_str())
                .legend(move |(a, b)| PathElement::new(vec![(a, b), (a + 18, b)], red));
            chart
                .configure_series_labels()
                .label_font((FAMILY, font))
                .background_style(WHITE.mix(0.85))
                .border_style(BLACK)
                .position(SeriesLabelPosition::UpperRight)
                .draw()
                .m()?;
        }
        Ok::<(), String>(())
    })
}

/// Draw a plane of cells coloured by value (viridis), contour lines, and a
/// colour scale on the right. Logarithmic colours when positive values
/// span decades. At most `max_cells` cells are drawn along each axis (every
/// k-th one beyond that); returns k along each axis.
pub fn map<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    m: &Map,
    max_cells: usize,
) -> Result<(usize, usize), String> {
    let (w, h) = area.dim_in_pixel();
    let font = (h / 30).clamp(10, 16);
    let (nx, ny) = (m.values.len(), m.values.first().map_or(0, Vec::len));
    let flat: Vec<f64> = m.values.iter().flatten().copied().collect();
    let log = spans_decades(&flat);
    let (lo, hi) = range(flat.iter().copied(), log).unwrap_or((0.0, 1.0));
    let norm = |v: f64| -> f64 {
        if log {
            if v > 0.0 {
                (v.log10() - lo.log10()) / (hi.log10() - lo.log10())
            } else {
                f64::NAN
            }
        } else {
            (v - lo) / (hi - lo)
        }
    };
    let (sx, sy) = (nx.div_ceil(max_cells).max(1), ny.div_ceil(max_cells).max(1));
    let (main, bar) = area.split_horizontally(w - (w / 7).max(90));
    let place = |a: f64, b: f64| m.shape.place(a, b);
    let (xr, yr) = page_ranges(m, &main, font);
    let (xlabel, ylabel) = match m.shape {
        Embed::Plain => (m.xlabel.as_str(), m.ylabel.as_str()),
        _ => (m.page_labels.0.as_str(), m.page_labels.1.as_str()),
    };
    let mut chart = ChartBuilder::on(&main)
        .margin(8)
        .x_label_area_size(font * 3)
        .y_label_area_size(font * 5)
        .build_cartesian_2d(xr.0..xr.1, yr.0..yr.1)
        .m()?;
    chart
        .configure_mesh()
        .disable_mesh()
        .x_desc(xlabel)
        .y_desc(ylabel)
        .x_labels(7)
        .y_labels(7)
        .x_label_formatter(&|v| tick(*v, xr.1 - xr.0))
        .y_label_formatter(&|v| tick(*v, yr.1 - yr.0))
        .label_style((FAMILY, font))
        .axis_desc_style((FAMILY, font))
        .draw()
        .m()?;
    // Cells: every sx-th along x and sy-th along y, spanning the cells skipped.
    let xi: Vec<usize> = (0..nx).step_by(sx).collect();
    let yi: Vec<usize> = (0..ny).step_by(sy).collect();
    let mut cells = Vec::with_capacity(xi.len() * yi.len());
    for &i in &xi {
        for &j in &yi {
            let (r, g, b) = viridis::colour(norm(m.values[i][j]));
            let (x0, y0) = (m.x_edges[i], m.y_edges[j]);
            let x1 = m.x_edges[(i + sx).min(nx)];
            let y1 = m.y_edges[(j + sy).min(ny)];
            cells.push(Polygon::new(
                outline(m.shape, (x0, y0), (x1, y1)),
                RGBColor(r, g, b).filled(),
            ));
        }
    }
    chart.draw_series(cells).m()?;
    // Contours of the normalised values at the shown cells' centres.
    let cx: Vec<f64> = xi
        .iter()
        .map(|&i| 0.5 * (m.x_edges[i] + m.x_edges[(i + sx).min(nx)]))
        .collect();
    let cy: Vec<f64> = yi
        .iter()
        .map(|&j| 0.5 * (m.y_edges[j] + m.y_edges[(j + sy).min(ny)]))
        .collect();
    let grid: Vec<Vec<f64>> = xi
        .iter()
        .map(|&i| yi.iter().map(|&j| norm(m.values[i][j])).collect())
        .collect();
    let levels: Vec<f64> = (1..8).map(|k| k as f64 / 8.0).collect();
    let segments = contour::segments(&cx, &cy, &grid, &levels);
    let ink = RGBColor(20, 20, 20).mix(0.55).stroke_width(1);
    chart
        .draw_series(
            segments
                .into_iter()
                .map(|(a, b)| PathElement::new(vec![place(a.0, a.1), place(b.0, b.1)], ink)),
        )
        .m()?;
    colour_bar(&bar, &m.label, (lo, hi), log, &levels, font)?;
    Ok((sx, sy))
}

/// The corners of the cell [a0, a1] × [b0, b1] on the page; curved sides
/// (an angle varying) are cut into pieces of at most 0.02 rad.
fn outline(shape: Embed, (a0, b0): (f64, f64), (a1, b1): (f64, f64)) -> Vec<(f64, f64)> {
    if shape == Embed::Plain {
        return vec![(a0, b0), (a1, b0), (a1, b1), (a0, b1)];
    }
    let n = (((b1 - b0).abs() / 0.02).ceil() as usize).clamp(1, 64);
    let mut out = Vec::with_capacity(2 * n + 2);
    for k in 0..=n {
        out.push(shape.place(a0, b0 + (b1 - b0) * k as f64 / n as f64));
    }
    for k in (0..=n).rev() {
        out.push(shape.place(a1, b0 + (b1 - b0) * k as f64 / n as f64));
    }
    out
}

/// The page ranges that hold every cell: the plane's own ranges, or for a
/// real shape the box around the placed cells widened so that one unit is
/// as long across as up (a disk stays round).
fn page_ranges<DB: DrawingBackend>(
    m: &Map,
    area: &DrawingArea<DB, Shift>,
    font: u32,
) -> ((f64, f64), (f64, f64)) {
    let (nx, ny) = (m.x_edges.len() - 1, m.y_edges.len() - 1);
    if m.shape == Embed::Plain {
        return ((m.x_edges[0], m.x_edges[nx]), (m.y_edges[0], m.y_edges[ny]));
    }
    let (mut x, mut y) = (
        (f64::INFINITY, f64::NEG_INFINITY),
        (f64::INFINITY, f64::NEG_INFINITY),
    );
    for &a in [m.x_edges[0], m.x_edges[nx]].iter() {
        for b in &m.y_edges {
            let (px, py) = m.shape.place(a, *b);
            x = (x.0.min(px), x.1.max(px));
            y = (y.0.min(py), y.1.max(py));
        }
    }
    let (w, h) = area.dim_in_pixel();
    let pw = (w as f64 - 16.0 - 5.0 * font as f64).max(1.0);
    let ph = (h as f64 - 16.0 - 3.0 * font as f64).max(1.0);
    let (dx, dy) = (x.1 - x.0, y.1 - y.0);
    if dx / pw > dy / ph {
        let grow = dx / pw * ph - dy;
        y = (y.0 - grow / 2.0, y.1 + grow / 2.0);
    } else {
        let grow = dy / ph * pw - dx;
        x = (x.0 - grow / 2.0, x.1 + grow / 2.0);
    }
    (x, y)
}

fn colour_bar<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    label: &str,
    (lo, hi): (f64, f64),
    log: bool,
    levels: &[f64],
    font: u32,
) -> Result<(), String> {
    let (_, h) = area.dim_in_pixel();
    let steps = 128;
    with_ranges!(false, log, 0f64..1f64, lo..hi, |x, y| {
        let mut chart = ChartBuilder::on(area)
            .margin_top(8)
            .margin_bottom(font * 3 + 8)
            .margin_right(4)
            .set_label_area_size(LabelAreaPosition::Left, 0)
            .set_label_area_size(LabelAreaPosition::Right, font * 5)
            .build_cartesian_2d(x, y)
            .m()?;
        chart
            .configure_mesh()
            .disable_mesh()
            .disable_x_axis()
            .y_desc(label)
            .y_labels((h / 60).max(3) as usize)
            .y_label_formatter(&|v| tick(*v, if log { 0.0 } else { hi - lo }))
            .label_style((FAMILY, font))
            .axis_desc_style((FAMILY, font))
            .draw()
            .m()?;
        let at = |t: f64| {
            if log {
                10f64.powf(lo.log10() + t * (hi.log10() - lo.log10()))
            } else {
                lo + t * (hi - lo)
            }
        };
        chart
            .draw_series((0..steps).map(|k| {
                let (t0, t1) = (k as f64 / steps as f64, (k + 1) as f64 / steps as f64);
                let (r, g, b) = viridis::colour((t0 + t1) / 2.0);
                Rectangle::new([(0.0, at(t0)), (1.0, at(t1))], RGBColor(r, g, b).filled())
            }))
            .m()?;
        // The contour levels, marked across the scale.
        chart
            .draw_series(levels.iter().map(|t| {
                PathElement::new(
                    vec![(0.0, at(*t)), (1.0, at(*t))],
                    RGBColor(20, 20, 20).mix(0.55).stroke_width(1),
                )
            }))
            .m()?;
        Ok::<(), String>(())
    })
}
