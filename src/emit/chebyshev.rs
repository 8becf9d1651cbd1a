//! Piecewise Chebyshev interpolants of a function of one variable, built to
//! a stated relative error and verified before they are used.
//!
//! Owns: the fit (values at the Chebyshev points of the second kind, the
//! coefficients by the discrete cosine sum; Trefethen 2013, *Approximation
//! Theory and Approximation Practice*, SIAM, ch. 3, eqs. (3.2) and (4.8)
//! rewritten as a DCT-I), the Clenshaw evaluation every emitted language
//! repeats operation for operation (Trefethen 2013, exercise 3.17; Clenshaw
//! 1955, Math. Tables Aids Comput. 9, 118), and the refinement: a piece
//! whose error at its check points exceeds the target is fitted with more
//! points, then split in two. Does not own where the function comes from or
//! how the pieces are printed.

/// Degrees tried on a piece before it is split.
const DEGREES: [usize; 5] = [12, 20, 32, 48, 64];

/// Pieces at most; beyond, the interpolant is refused.
pub const MAX_PIECES: usize = 4000;

/// One piece: the interval and the coefficients of Σ c_k T_k(t),
/// t = (2s − (a + b))/(b − a).
#[derive(Clone, Debug)]
pub struct Piece {
    pub a: f64,
    pub b: f64,
    pub coefficients: Vec<f64>,
}

impl Piece {
    /// The variable t ∈ [−1, 1] of `s`, written the same way in every
    /// emitted language.
    pub fn t(&self, s: f64) -> f64 {
        (2.0 * s - (self.a + self.b)) / (self.b - self.a)
    }

    /// Clenshaw's recurrence, in the order the emitted code runs it.
    pub fn eval(&self, s: f64) -> f64 {
        clenshaw(&self.coefficients, self.t(s))
    }
}

/// Σ c_k T_k(t) by Clenshaw's recurrence: b_k = c_k + 2t b_{k+1} − b_{k+2},
/// the sum c_0 + t b_1 − b_2.
pub fn clenshaw(c: &[f64], t: f64) -> f64 {
    let (mut b1, mut b2) = (0.0f64, 0.0f64);
    for k in (1..c.len()).rev() {
        let b0 = c[k] + 2.0 * t * b1 - b2;
        b2 = b1;
        b1 = b0;
    }
    c[0] + t * b1 - b2
}

/// The interpolant of `f` on [a, b] in the n + 1 Chebyshev points
/// s_j = mid + half·cos(jπ/n): c_k = (2/n) Σ''_j f_j cos(jkπ/n), the first
/// and last terms of the sum and the coefficients c_0, c_n halved.
pub fn fit(f: &dyn Fn(f64) -> f64, a: f64, b: f64, n: usize) -> Piece {
    let (mid, half) = (0.5 * (a + b), 0.5 * (b - a));
    let pi = std::f64::consts::PI;
    let values: Vec<f64> = (0..=n)
        .map(|j| {
            // The end points exactly, so that neighbouring pieces meet.
            match j {
                0 => f(b),
                j if j == n => f(a),
                j => f(mid + half * (j as f64 * pi / n as f64).cos()),
            }
        })
        .collect();
    let mut c = vec![0.0; n + 1];
    for (k, ck) in c.iter_mut().enumerate() {
        let mut s = 0.0;
        for (j, v) in values.iter().enumerate() {
            let w = if j == 0 || j == n { 0.5 } else { 1.0 };
            // cos(jkπ/n) with the product reduced mod 2n, exact in integers.
            let m = (j * k) % (2 * n);
            s += w * v * (m as f64 * pi / n as f64).cos();
        }
        *ck = 2.0 * s / n as f64;
    }
    c[0] *= 0.5;
    c[n] *= 0.5;
    Piece {
        a,
        b,
        coefficients: c,
    }
}

/// Points inside [a, b] where a piece of degree n is checked: the midpoints
/// between its Chebyshev points (where an interpolant's error peaks) and a
/// uniform set.
pub fn check_points(a: f64, b: f64, n: usize) -> Vec<f64> {
    let (mid, half) = (0.5 * (a + b), 0.5 * (b - a));
    let pi = std::f64::consts::PI;
    let mut pts: Vec<f64> = (0..n)
        .map(|j| mid + half * ((j as f64 + 0.5) * pi / n as f64).cos())
        .collect();
    let m = 2 * n;
    pts.extend((0..=m).map(|i| a + (b - a) * i as f64 / m as f64));
    pts
}

/// Fit `f` on [a, b] to relative error `target` as `error(fitted, exact)`
/// measures it: more points first, then halves. `Err` with the worst piece
/// when [`MAX_PIECES`] are not enough or a piece would be shorter than 1e-9
/// of the interval.
pub fn fit_to(
    f: &dyn Fn(f64) -> f64,
    error: &dyn Fn(f64, f64) -> f64,
    a: f64,
    b: f64,
    target: f64,
    pieces: &mut Vec<Piece>,
) -> Result<(), (f64, f64, f64)> {
    let span = b - a;
    let mut stack = vec![(a, b)];
    while let Some((a, b)) = stack.pop() {
        let mut best: Option<(f64, Piece)> = None;
        for n in DEGREES {
            let p = fit(f, a, b, n);
            let e = check_points(a, b, n)
                .into_iter()
                .map(|s| error(p.eval(s), f(s)))
                .fold(0.0f64, f64::max);
            let better = best.as_ref().is_none_or(|(be, _)| e < *be);
            if better {
                best = Some((e, p));
            }
            if e <= target {
                break;
            }
        }
        let (e, p) = best.expect("a degree was tried");
        if e <= target {
            pieces.push(p);
        } else if pieces.len() + stack.len() >= MAX_PIECES || (b - a) <= 1e-9 * span {
            return Err((a, b, e));
        } else {
            let m = 0.5 * (a + b);
            // The right half goes first on the stack, so pieces stay in order.
            stack.push((m, b));
            stack.push((a, m));
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn interpolates_a_polynomial_exactly_and_exp_to_round_off() {
        // T_3(t) = 4t³ − 3t: its coefficients are (0, 0, 0, 1) (Trefethen
        // 2013, ch. 3).
        let p = fit(&|s| 4.0 * s * s * s - 3.0 * s, -1.0, 1.0, 6);
        for (k, c) in p.coefficients.iter().enumerate() {
            let want = if k == 3 { 1.0 } else { 0.0 };
            assert!((c - want).abs() < 1e-15, "c_{k} = {c}");
        }
        let mut pieces = Vec::new();
        let rel = |g: f64, f: f64| ((g - f) / f).abs();
        fit_to(&f64::exp, &rel, 0.0, 30.0, 1e-13, &mut pieces).unwrap();
        for i in 0..=997 {
            let s = 30.0 * i as f64 / 997.0;
            let p = pieces.iter().find(|p| s <= p.b).unwrap();
            assert!(rel(p.eval(s), s.exp()) < 1e-13, "{s}");
        }
    }
}
