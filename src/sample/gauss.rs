//! Gauss–Legendre and Gauss–Lobatto quadrature rules on [−1, 1].
//!
//! Owns: the nodes and weights of the n-point rule, computed by the
//! Golub–Welsch method (G. H. Golub & J. H. Welsch 1969, "Calculation of
//! Gauss quadrature rules", Math. Comp. 23, 221): the nodes are the
//! eigenvalues of the symmetric tridiagonal Jacobi matrix of the Legendre
//! recurrence, β_k = k/√(4k² − 1), and the weights are 2 v₀², v₀ the first
//! component of each normalised eigenvector. The eigen-decomposition is
//! nalgebra's. Each node is then polished by one Newton step on P_n (three-term
//! recurrence) and its weight recomputed as 2/((1 − x²) P_n′(x)²), which
//! brings both to rounding level for every n we allow.
//!
//! Gauss–Lobatto rules (both ends ±1 among the nodes) come from the same
//! eigen-decomposition of the Jacobi matrix modified so that ±1 are
//! eigenvalues (G. H. Golub 1973, "Some modified matrix eigenvalue
//! problems", SIAM Review 15, 318, §7): the last diagonal entry α and
//! off-diagonal β² solve the 2 × 2 system built from (J_{n−1} ∓ I) g = e.
//! The interior nodes are the zeros of P′_{n−1}; each is polished by one
//! Newton step on P′_{n−1} and every weight recomputed as
//! 2/(n(n−1) P_{n−1}(x)²) (2/(n(n−1)) at the ends).
//!
//! Does not own where a rule is applied (see the parent module).

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
        symmetrise(&mut rule);
        Some(rule)
    }
}

/// Which family a rule belongs to: where its nodes sit in a cell.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum NodeFamily {
    /// Gauss–Legendre: interior nodes, exact to degree 2n − 1.
    Legendre,
    /// Gauss–Lobatto (Legendre–Gauss–Lobatto): both ends among the nodes,
    /// exact to degree 2n − 3; n ≥ 2.
    Lobatto,
}

impl NodeFamily {
    /// The name written into files and accepted in profiles.
    pub fn name(self) -> &'static str {
        match self {
            NodeFamily::Legendre => "gauss-legendre",
            NodeFamily::Lobatto => "gauss-lobatto",
        }
    }

    /// The smallest number of points of the family (1, or 2 for Lobatto).
    pub fn min_points(self) -> usize {
        match self {
            NodeFamily::Legendre => 1,
            NodeFamily::Lobatto => 2,
        }
    }

    /// The highest polynomial degree the n-point rule integrates exactly.
    pub fn exact_degree(self, n: usize) -> usize {
        match self {
            NodeFamily::Legendre => 2 * n - 1,
            NodeFamily::Lobatto => 2 * n - 3,
        }
    }

    /// The n-point rule of the family on [−1, 1], None for n out of range.
    pub fn rule(self, n: usize) -> Option<GaussLegendre> {
        match self {
            NodeFamily::Legendre => GaussLegendre::new(n),
            NodeFamily::Lobatto => gauss_lobatto(n),
        }
    }
}

/// The n-point Gauss–Lobatto rule on [−1, 1] (2 ≤ n ≤ [`MAX_POINTS`]), in
/// the same container as the Gauss–Legendre rules; see the module
/// documentation for the method.
pub fn gauss_lobatto(n: usize) -> Option<GaussLegendre> {
    if !(2..=MAX_POINTS).contains(&n) {
        return None;
    }
    let (mut nodes, mut weights) = golub_welsch_lobatto(n);
    let m = n - 1;
    let end = 2.0 / (n as f64 * m as f64);
    (nodes[0], nodes[m], weights[0], weights[m]) = (-1.0, 1.0, end, end);
    for i in 1..m {
        let x = nodes[i];
        // Newton on P′_m: (1 − x²) P″_m = 2x P′_m − m(m+1) P_m.
        let (p, dp) = legendre(m, x);
        let d2p = (2.0 * x * dp - (m * (m + 1)) as f64 * p) / (1.0 - x * x);
        let x = x - dp / d2p;
        let (p, _) = legendre(m, x);
        nodes[i] = x;
        weights[i] = end / (p * p);
    }
    let mut rule = GaussLegendre { nodes, weights };
    symmetrise(&mut rule);
    Some(rule)
}

/// Imposes the exact symmetry of a rule about 0.
fn symmetrise(rule: &mut GaussLegendre) {
    let n = rule.nodes.len();
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
}

/// The Jacobi matrix of the Legendre recurrence, n × n.
fn jacobi_matrix(n: usize) -> DMatrix<f64> {
    let mut jacobi = DMatrix::<f64>::zeros(n, n);
    for k in 1..n {
        let kf = k as f64;
        let beta = kf / (4.0 * kf * kf - 1.0).sqrt();
        jacobi[(k - 1, k)] = beta;
        jacobi[(k, k - 1)] = beta;
    }
    jacobi
}

/// Lobatto nodes and weights from the modified Jacobi matrix (Golub 1973),
/// without refinement; n ≥ 2.
fn golub_welsch_lobatto(n: usize) -> (Vec<f64>, Vec<f64>) {
    let m = n - 1;
    let mut jacobi = jacobi_matrix(n);
    // (J_m − a I) g = e_m for a = −1 and a = +1; then
    // α − β² g_m(−1) = −1, α − β² g_m(+1) = +1.
    let small = jacobi.view((0, 0), (m, m)).into_owned();
    let mut e = nalgebra::DVector::<f64>::zeros(m);
    e[m - 1] = 1.0;
    let solve = |a: f64| {
        let shifted = &small - DMatrix::<f64>::identity(m, m) * a;
        shifted.lu().solve(&e).map(|g| g[m - 1])
    };
    let (gm, gp) = (
        solve(-1.0).expect("J − a I is regular for a outside the spectrum"),
        solve(1.0).expect("J − a I is regular for a outside the spectrum"),
    );
    let beta_sq = 2.0 / (gm - gp);
    let alpha = -1.0 + beta_sq * gm;
    jacobi[(m, m)] = alpha;
    jacobi[(m - 1, m)] = beta_sq.sqrt();
    jacobi[(m, m - 1)] = beta_sq.sqrt();
    eigen_pairs(jacobi)
}

/// Nodes (increasing) and weights from the eigen-decomposition of the Jacobi
/// matrix, without refinement.
fn golub_welsch(n: usize) -> (Vec<f64>, Vec<f64>) {
    eigen_pairs(jacobi_matrix(n))
}

/// Eigenvalues (increasing) and 2 v₀² of a symmetric Jacobi matrix.
fn eigen_pairs(jacobi: DMatrix<f64>) -> (Vec<f64>, Vec<f64>) {
    let n = jacobi.nrows();
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

/// The L2 projection of a rule's node values onto Legendre polynomials of
/// degree < `modes` on [−1, 1]: `m[j * q + k] = (2j + 1)/2 · w_k P_j(x_k)`,
/// so that c_j = Σ_k m[j q + k] f(x_k) is the coefficient of P_j (P_j(1) = 1)
/// in f ≈ Σ_j c_j P_j — exact when f P_j has degree ≤ 2q − 1.
pub fn projection(modes: usize, rule: &GaussLegendre) -> Vec<f64> {
    let q = rule.nodes.len();
    let mut m = vec![0.0; modes * q];
    for (k, (x, w)) in rule.nodes.iter().zip(&rule.weights).enumerate() {
        for j in 0..modes {
            let p = if j == 0 { 1.0 } else { legendre(j, *x).0 };
            m[j * q + k] = (2 * j + 1) as f64 / 2.0 * w * p;
        }
    }
    m
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

    /// The rule applied to x^k.
    fn moment(r: &GaussLegendre, k: i32) -> f64 {
        r.nodes
            .iter()
            .zip(&r.weights)
            .map(|(x, w)| w * x.powi(k))
            .sum()
    }

    /// ∫₋₁¹ x^k dx = 2/(k+1) for even k, 0 for odd k.
    fn monomial(k: i32) -> f64 {
        if k % 2 == 0 {
            2.0 / (k as f64 + 1.0)
        } else {
            0.0
        }
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
                let (q, exact) = (moment(&r, k as i32), monomial(k as i32));
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
            let q = moment(&r, k);
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

    #[test]
    fn lobatto_tabulated_rules() {
        // Gauss–Lobatto nodes and weights, Abramowitz & Stegun 1964, Table
        // 25.6 (typed from memory, 15 digits; each confirmed with mpmath at
        // 30 digits: zeros of P′_{n−1} by findroot, w = 2/(n(n−1)P_{n−1}²)).
        let table: [(usize, &[(f64, f64)]); 4] = [
            (
                4,
                &[
                    (0.447_213_595_499_958, 0.833_333_333_333_333),
                    (1.0, 0.166_666_666_666_667),
                ],
            ),
            (
                5,
                &[
                    (0.0, 0.711_111_111_111_111),
                    (0.654_653_670_707_977, 0.544_444_444_444_444),
                    (1.0, 0.1),
                ],
            ),
            (
                6,
                &[
                    (0.285_231_516_480_645, 0.554_858_377_035_486),
                    (0.765_055_323_929_465, 0.378_474_956_297_847),
                    (1.0, 0.066_666_666_666_667),
                ],
            ),
            (
                7,
                &[
                    (0.0, 0.487_619_047_619_048),
                    (0.468_848_793_470_714, 0.431_745_381_209_863),
                    (0.830_223_896_278_567, 0.276_826_047_361_566),
                    (1.0, 0.047_619_047_619_048),
                ],
            ),
        ];
        for (n, rows) in table {
            let r = gauss_lobatto(n).unwrap();
            let upper = &r.nodes[n / 2..];
            let uw = &r.weights[n / 2..];
            assert_eq!(upper.len(), rows.len(), "n = {n}");
            for (i, (x, w)) in rows.iter().enumerate() {
                // The table rounds to 15 decimals: 1e-15 covers its rounding.
                assert!(close(upper[i], *x, 1e-15), "n = {n} node {i}: {}", upper[i]);
                assert!(close(uw[i], *w, 1e-15), "n = {n} weight {i}: {}", uw[i]);
            }
        }
        // Closed forms (A&S 25.4.32, from memory): n = 2 is the trapezoid rule, n = 3
        // Simpson's (1/3, 4/3, 1/3), n = 4 has ±1/√5.
        let r = gauss_lobatto(3).unwrap();
        assert!(close(r.weights[1], 4.0 / 3.0, 1e-15) && close(r.weights[0], 1.0 / 3.0, 1e-15));
        let r = gauss_lobatto(2).unwrap();
        assert!(close(r.weights[0], 1.0, 1e-15) && close(r.nodes[0], -1.0, 0.0));
        assert!(close(
            gauss_lobatto(4).unwrap().nodes[2],
            0.2f64.sqrt(),
            2e-16
        ));
        assert!(gauss_lobatto(1).is_none() && gauss_lobatto(MAX_POINTS + 1).is_none());
    }

    #[test]
    fn every_family_exact_to_its_degree() {
        // ∫₋₁¹ x^k dx = 2/(k+1) for even k, 0 for odd k; Gauss–Legendre to
        // degree 2n − 1, Gauss–Lobatto to 2n − 3 (A&S 25.4.29 and 25.4.32, numbers
        // from memory),
        // n = 1 to 16; the raw Golub–Welsch Lobatto nodes agree with the
        // polished ones.
        for family in [NodeFamily::Legendre, NodeFamily::Lobatto] {
            for n in family.min_points()..=16 {
                let r = family.rule(n).unwrap();
                for k in 0..=family.exact_degree(n) {
                    let (q, exact) = (moment(&r, k as i32), monomial(k as i32));
                    assert!(
                        close(q, exact, 4e-15),
                        "{family:?} n = {n}, degree {k}: {q}"
                    );
                }
                let k = family.exact_degree(n) as i32 + 1;
                if n <= 6 && k % 2 == 0 {
                    let q = moment(&r, k);
                    assert!(
                        !close(q, 2.0 / (k as f64 + 1.0), 1e-12),
                        "{family:?} n = {n}"
                    );
                }
            }
        }
        for n in [2, 5, 16, 40] {
            let (x, w) = golub_welsch_lobatto(n);
            let r = gauss_lobatto(n).unwrap();
            for i in 0..n {
                assert!(close(x[i], r.nodes[i], 1e-13), "n = {n} node {i}");
                assert!(close(w[i], r.weights[i], 1e-12), "n = {n} weight {i}");
            }
        }
    }
}
