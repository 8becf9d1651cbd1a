//! Ghost layers ("halo") around a grid: cells added outside the domain on
//! both sides of an axis, where the background is evaluated too, for codes
//! that keep ghost cells filled with the equilibrium.
//!
//! Owns: the edges of the added cells (the spacing of the axis continued:
//! equal widths, equal ratios, or the edge cells' widths reflected for
//! explicit edges) and the refusal of layers that reach where the
//! coordinate does not exist (R or r below 0, θ outside [0, π]). Does not
//! own whether the background exists there (the closure's survey decides,
//! on the grown domain).

use std::f64::consts::PI;

use super::{Axis, Coord, Grid, GridError, Layout, Spacing};

/// The edges of `axis` with `n` cells added on each side.
fn grown(axis: &Axis, n: usize) -> Vec<f64> {
    let e = &axis.edges;
    let m = e.len();
    let (first, last) = (e[0], e[m - 1]);
    let cells = m - 1;
    let (mut lo, mut hi) = (Vec::with_capacity(n), Vec::with_capacity(n));
    let (mut at_lo, mut at_hi) = (first, last);
    for k in 1..=n {
        let kf = k as f64;
        match axis.spacing {
            Spacing::Uniform => {
                lo.push(first - kf * (e[1] - e[0]));
                hi.push(last + kf * (e[m - 1] - e[m - 2]));
            }
            Spacing::Log => {
                lo.push(first * (e[0] / e[1]).powi(k as i32));
                hi.push(last * (e[m - 1] / e[m - 2]).powi(k as i32));
            }
            Spacing::Explicit => {
                // The widths of the edge cells mirrored outward; past the
                // axis's own cells, the innermost width repeated.
                let j = k.min(cells);
                at_lo -= e[j] - e[j - 1];
                at_hi += e[m - j] - e[m - j - 1];
                lo.push(at_lo);
                hi.push(at_hi);
            }
        }
    }
    lo.reverse();
    lo.extend_from_slice(e);
    lo.extend(hi);
    lo
}

impl Grid {
    /// The ghost layers per side of each axis (0 where none were asked for).
    pub fn halo(&self) -> &[usize] {
        &self.halo
    }

    /// The grid with `layers[a]` cells added on each side of axis `a`; the
    /// error names the axis (its index) whose layers would reach where its
    /// coordinate does not exist. A φ axis may then span more than 2π (its
    /// ghost cells repeat the circle).
    pub fn with_halo(mut self, layers: &[usize]) -> Result<Grid, (usize, GridError)> {
        let polar = matches!(
            self.layout,
            Layout::Polar | Layout::Cylindrical | Layout::Spherical
        );
        for (a, &n) in layers.iter().enumerate() {
            if n == 0 {
                continue;
            }
            let axis = &self.axes[a];
            let coord = axis.coord;
            let edges = grown(axis, n);
            let (lo, hi) = (edges[0], edges[edges.len() - 1]);
            let (first, last) = axis.range();
            let refuse = |message: String| Err((a, GridError::Domain { coord, message }));
            let layers = if n == 1 { "layer" } else { "layers" };
            match coord {
                Coord::R | Coord::Sph if lo < 0.0 || (polar && lo <= 0.0) => {
                    return refuse(format!(
                        "{n} halo {layers} below {coord} = {first} reach {coord} = {lo}, and the \
                         background does not exist at {coord} {} 0 (no radius is negative{}); ask \
                         for fewer layers or start the axis further from {coord} = 0",
                        if polar { "≤" } else { "<" },
                        if polar {
                            ", and a grid with phi is singular at 0"
                        } else {
                            ""
                        }
                    ));
                }
                Coord::Theta if lo < 0.0 || hi > PI * (1.0 + 4.0 * f64::EPSILON) => {
                    return refuse(format!(
                        "{n} halo {layers} around theta in [{first}, {last}] reach [{lo}, {hi}], \
                         outside [0, π], where theta does not exist; ask for fewer layers or \
                         keep the axis further from the poles"
                    ));
                }
                _ => {}
            }
            let grown = Axis {
                coord,
                edges,
                spacing: axis.spacing,
            };
            grown.validate().map_err(|e| (a, e))?;
            self.axes[a] = grown;
            self.halo[a] = n;
        }
        Ok(self)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: &[f64], b: &[f64]) -> bool {
        a.len() == b.len() && a.iter().zip(b).all(|(x, y)| (x - y).abs() < 1e-14)
    }

    #[test]
    fn layers_continue_the_spacing() {
        let g = Grid::new(vec![Axis::uniform(Coord::Z, 0.0, 1.0, 4).unwrap()])
            .unwrap()
            .with_halo(&[2])
            .unwrap();
        assert!(close(
            &g.axes()[0].edges,
            &[-0.5, -0.25, 0.0, 0.25, 0.5, 0.75, 1.0, 1.25, 1.5]
        ));
        assert_eq!(g.halo(), &[2]);
        let g = Grid::new(vec![Axis::log(Coord::R, 1.0, 16.0, 4).unwrap()])
            .unwrap()
            .with_halo(&[1])
            .unwrap();
        assert!(close(
            &g.axes()[0].edges,
            &[0.5, 1.0, 2.0, 4.0, 8.0, 16.0, 32.0]
        ));
        let g = Grid::new(vec![Axis::explicit(Coord::Z, vec![0.0, 1.0, 3.0]).unwrap()])
            .unwrap()
            .with_halo(&[3])
            .unwrap();
        assert!(close(
            &g.axes()[0].edges,
            &[-5.0, -3.0, -1.0, 0.0, 1.0, 3.0, 5.0, 6.0, 7.0]
        ));
    }

    #[test]
    fn layers_below_zero_radius_are_refused() {
        let g = Grid::new(vec![Axis::uniform(Coord::R, 0.1, 1.0, 9).unwrap()]).unwrap();
        let (a, e) = g.with_halo(&[2]).unwrap_err();
        assert_eq!(a, 0);
        assert!(e.to_string().contains("R = -0.1"), "{e}");
    }
}
