//! Contour lines of values on a rectilinear lattice by marching squares
//! (Lorensen & Cline 1987, "Marching cubes", SIGGRAPH, in its 2D form):
//! each square of four neighbouring points is cut where a level lies
//! between its corners, by linear interpolation along the edges.
//!
//! Owns: the segments. Does not own: drawing them.

/// Line segments of every level in `levels` through the values `v[i][j]`
/// at the points (`x[i]`, `y[j]`). Squares with a value that is not finite
/// are skipped; a saddle (two opposite corners above) is joined as two
/// separate segments, one per pair of adjacent cut edges.
pub fn segments(
    x: &[f64],
    y: &[f64],
    v: &[Vec<f64>],
    levels: &[f64],
) -> Vec<((f64, f64), (f64, f64))> {
    let mut out = Vec::new();
    if x.len() < 2 || y.len() < 2 {
        return out;
    }
    for i in 0..x.len() - 1 {
        for j in 0..y.len() - 1 {
            // Corners counter-clockwise from (i, j).
            let c = [
                (x[i], y[j], v[i][j]),
                (x[i + 1], y[j], v[i + 1][j]),
                (x[i + 1], y[j + 1], v[i + 1][j + 1]),
                (x[i], y[j + 1], v[i][j + 1]),
            ];
            if c.iter().any(|p| !p.2.is_finite()) {
                continue;
            }
            for &l in levels {
                let mut cuts = Vec::with_capacity(4);
                for k in 0..4 {
                    let (a, b) = (c[k], c[(k + 1) % 4]);
                    if (a.2 < l) != (b.2 < l) {
                        let t = (l - a.2) / (b.2 - a.2);
                        cuts.push((a.0 + t * (b.0 - a.0), a.1 + t * (b.1 - a.1)));
                    }
                }
                match cuts.len() {
                    2 => out.push((cuts[0], cuts[1])),
                    4 => {
                        out.push((cuts[0], cuts[1]));
                        out.push((cuts[2], cuts[3]));
                    }
                    _ => {}
                }
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The level 1 of v = x² + y² is the unit circle: every segment end
    /// lies within the interpolation error of the circle.
    #[test]
    fn circle_is_found() {
        let n = 41;
        let p: Vec<f64> = (0..n)
            .map(|i| -2.0 + 4.0 * i as f64 / (n - 1) as f64)
            .collect();
        let v: Vec<Vec<f64>> = p
            .iter()
            .map(|a| p.iter().map(|b| a * a + b * b).collect())
            .collect();
        let s = segments(&p, &p, &v, &[1.0]);
        assert!(s.len() > 40, "{} segments", s.len());
        for (a, b) in s {
            for (x, y) in [a, b] {
                assert!((x.hypot(y) - 1.0).abs() < 0.01, "({x}, {y})");
            }
        }
    }
}
