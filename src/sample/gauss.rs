//! Gauss–Legendre quadrature rules on [−1, 1].
//!
//! Owns: the nodes and weights of the n-point rule, computed by the
//! Golub–Welsch method (G. H. Golub & J. H. Welsch 1969, "Calculation of
//! Gauss quadrature rules", Math. Comp. 23, 221): the nodes are the
//! eigenvalues of the symmetric tridiagonal Jacobi matrix of the Legendre
//! recurrence, β_k = k/√(4k² − 1), and the weights are 2 v₀², v₀ the first
//! component of each normalised eigenvector. The eigen-decomposition is
//! nalgebra's. Each node is then polished by one Newton step on P_n (three-term
//! recurrence) and its weight recomputed as 2/((1 − x²) P_n′(x)²), which
//! brings both to rounding level for every n we allow. Does not own where the
//! rule is applied (see the parent module).

use nalgebra::DMatrix;

/// The largest number of points per axis accepted.
pub const MAX_POINTS: usize = 64;

/// An n-point Gauss–Legendre rule on [−1, 1]: exact for polynomials of
/// degree up to 2n − 1.
#[derive(Clone, Debug, PartialEq)]
pub struct GaussLegendre {
    /// Nodes in increasing order.
    pub nodes: Vec<f64>,
    /// Weights, summing to 2.
    pub weights: Vec<f64>,
}

impl GaussLegendre {
    /// The n-point rule, for 1 ≤ n ≤ [`MAX_POINTS`]; None otherwise.
    pub fn new(n: usize) -> Option<GaussLegendre> {
        if !(1..=MAX_POINTS).contains(&n) {
            return None;
        }
        let (nodes, weights) = golub_welsch(n);
        let mut rule = GaussLegendre { nodes, weights };
        for (x, w) in rule.nodes.iter_mut().zip(rule.weights.iter_mut()) {
            let (p, dp) = legendre(n, *x);
            *x -= p / dp;
            let (_, dp) = legendre(n, *x);
            *w = 2.0 / ((1.0 - *x * *x) * dp * dp);
        }
        // Impose the exact symmetry of the rule about 0.
        for i in 0..n / 2 {
            let j = n - 1 - i;
            let x = 0.5 * (rule.nodes[j] - rule.nodes[i]);
            let w = 0.5 * (rule.weights[i] + rule.weights[j]);
            (rule.nodes[i], rule.nodes[j]) = (-x, x);
            (rule.weights[i], rule.weights[j]) = (w, w);
        }
        if n % 2 == 1 {
            rule.nodes[n / 2] = 0.0;
        }
        Some(rule)
    }
}

/// Nodes (increasing) and weights from the eigen-decomposition of the Jacobi
/// matrix, without refinement.
fn golub_welsch(n: usize) -> (Vec<f64>, Vec<f64>) {
    let mut jacobi = DMatrix::<f64>::zeros(n, n);
    for k in 1..n {
        let kf = k as f64;
        let beta = kf / (4.0 * kf * kf - 1.0).sqrt();
        jacobi[(k - 1, k)] = beta;
        jacobi[(k, k - 1)] = beta;
    }
    let eigen = jacobi.symmetric_eigen();
    let mut pairs: Vec<(f64, f64)> = (0..n)
        .map(|i| {
            (
                eigen.eigenvalues[i],
                2.0 * eigen.eigenvectors[(0, i)].powi(2),
            )
        })
        .collect();
    pairs.sort_by(|a, b| a.0.total_cmp(&b.0));
    pairs.into_iter().unzip()
}

/// P_n(x) and P_n′(x) by the three-term recurrence
/// (k+1) P_{k+1} = (2k+1) x P_k − k P_{k−1}.
fn legendre(n: usize, x: f64) -> (f64, f64) {
    let (mut p0, mut p1) = (1.0, x);
    for k in 1..n {
        let kf = k as f64;
        let p2 = ((2.0 * kf + 1.0) * x * p1 - kf * p0) / (kf + 1.0);
        (p0, p1) = (p1, p2);
    }
    let p = if n == 0 { p0 } else { p1 };
    let dp = n as f64 * (x * p - p0) / (x * x - 1.0);
    (p, dp)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    #[test]
    fn low_orders_match_closed_forms() {
        // Closed forms, e.g. Abramowitz & Stegun 1964, Table 25.4:
        // n = 2: ±1/√3, weights 1; n = 3: 0, ±√(3/5), weights 8/9, 5/9.
        let r = GaussLegendre::new(2).unwrap();
        assert!(close(r.nodes[1], 1.0 / 3f64.sqrt(), 2e-16) && close(r.nodes[0], -r.nodes[1], 0.0));
        assert!(close(r.weights[0], 1.0, 1e-15) && close(r.weights[1], 1.0, 1e-15));
        let r = GaussLegendre::new(3).unwrap();
        assert!(close(r.nodes[1], 0.0, 0.0) && close(r.nodes[2], 0.6f64.sqrt(), 1e-16));
        assert!(close(r.weights[1], 8.0 / 9.0, 1e-15) && close(r.weights[2], 5.0 / 9.0, 1e-15));
        let r = GaussLegendre::new(1).unwrap();
        assert!(close(r.nodes[0], 0.0, 0.0) && close(r.weights[0], 2.0, 1e-15));
    }

    #[test]
    fn tabulated_rules() {
        // Abramowitz & Stegun 1964, Table 25.4 (15 digits).
        let r = GaussLegendre::new(4).unwrap();
        assert!(close(r.nodes[3], 0.861_136_311_594_053, 1e-15));
        assert!(close(r.nodes[2], 0.339_981_043_584_856, 1e-15));
        assert!(close(r.weights[3], 0.347_854_845_137_454, 1e-15));
        assert!(close(r.weights[2], 0.652_145_154_862_546, 1e-15));
        let r = GaussLegendre::new(5).unwrap();
        assert!(close(r.nodes[4], 0.906_179_845_938_664, 1e-15));
        assert!(close(r.nodes[3], 0.538_469_310_105_683, 1e-15));
        assert!(close(r.weights[4], 0.236_926_885_056_189, 1e-15));
        assert!(close(r.weights[2], 0.568_888_888_888_889, 1e-15));
        // n = 16, two largest nodes and their weights, from mpmath at 30 digits
        // (findroot on P_16; weight 2/((1 − x²) P_16′²)): 0.989400934991649932596,
        // 0.0271524594117540948518, 0.944575023073232576078,
        // 0.0622535239386478928628. numpy.polynomial.legendre.leggauss(16)
        // (numpy 2.4) agrees to 1e-16.
        let r = GaussLegendre::new(16).unwrap();
        assert!(close(r.nodes[15], 0.989_400_934_991_649_9, 2e-16));
        assert!(close(r.weights[15], 0.027_152_459_411_754_096, 1e-16));
        assert!(close(r.nodes[14], 0.944_575_023_073_232_6, 2e-16));
        assert!(close(r.weights[14], 0.062_253_523_938_647_894, 2e-16));
    }

    #[test]
    fn exact_for_degree_two_n_minus_one() {
        // ∫₋₁¹ x^k dx = 2/(k+1) for even k, 0 for odd k.
        for n in [1, 2, 3, 5, 8, 13, 20, 32, 64] {
            let r = GaussLegendre::new(n).unwrap();
            for k in 0..2 * n {
                let q: f64 = r
                    .nodes
                    .iter()
                    .zip(&r.weights)
                    .map(|(x, w)| w * x.powi(k as i32))
                    .sum();
                let exact = if k % 2 == 0 {
                    2.0 / (k as f64 + 1.0)
                } else {
                    0.0
                };
                assert!(
                    close(q, exact, 5e-15),
                    "n = {n}, degree {k}: {q} vs {exact}"
                );
            }
            if n > 8 {
                continue; // the error on x^2n is below rounding for larger n
            }
            // …and not for degree 2n (x^2n is not integrated exactly).
            let k = 2 * n as i32;
            let q: f64 = r
                .nodes
                .iter()
                .zip(&r.weights)
                .map(|(x, w)| w * x.powi(k))
                .sum();
            assert!(!close(q, 2.0 / (k as f64 + 1.0), 1e-15), "n = {n}");
        }
    }

    #[test]
    fn polishing_agrees_with_plain_golub_welsch() {
        for n in [2, 7, 24, 64] {
            let (x, w) = golub_welsch(n);
            let r = GaussLegendre::new(n).unwrap();
            for i in 0..n {
                assert!(close(x[i], r.nodes[i], 1e-13), "n = {n} node {i}");
                assert!(close(w[i], r.weights[i], 1e-12), "n = {n} weight {i}");
            }
        }
    }

    #[test]
    fn out_of_range_counts() {
        assert!(GaussLegendre::new(0).is_none());
        assert!(GaussLegendre::new(MAX_POINTS + 1).is_none());
    }
}
