//! Symbolic differentiation by one name. Results are built with the
//! simplifying constructors, so they stay compact; piecewise constructs
//! (`abs`, `min`, `max`, conditionals) differentiate branch by branch under
//! the same condition, which is the derivative away from the switching
//! points. A power with a constant exponent follows the power rule
//! c·u^(c−1)·u′, which is finite wherever the derivative exists, also where
//! u = 0 (the form c·u^c·u′/u, shorter for a reader, is 0/0 there).

use super::simplify::{add, call, iff, mul, pow, scale, simplify, simplify_cond};
use super::{CmpOp, Cond, Expr, Func};

fn num(v: f64) -> Expr {
    Expr::Num(v)
}

fn depends_on(e: &Expr, name: &str) -> bool {
    e.names().contains(name)
}

fn recip(e: Expr) -> Expr {
    pow(e, num(-1.0))
}

/// The derivative of `e` by `x` (simplified as it is built).
pub(crate) fn derivative(e: &Expr, x: &str) -> Expr {
    match e {
        Expr::Num(_) => num(0.0),
        Expr::Name(n) => num(if n == x { 1.0 } else { 0.0 }),
        Expr::Add(v) => add(v.iter().map(|t| derivative(t, x)).collect()),
        Expr::Mul(v) => {
            let v: Vec<Expr> = v.iter().map(simplify).collect();
            let mut terms = Vec::new();
            for i in 0..v.len() {
                let d = derivative(&v[i], x);
                if d.as_number().is_some_and(|d| d.abs() == 0.0) {
                    continue;
                }
                let mut fs: Vec<Expr> = v
                    .iter()
                    .enumerate()
                    .filter(|(j, _)| *j != i)
                    .map(|(_, f)| f.clone())
                    .collect();
                fs.push(d);
                terms.push(mul(fs));
            }
            add(terms)
        }
        Expr::Pow(u, v) => {
            let (u, v) = (simplify(u), simplify(v));
            let du = derivative(&u, x);
            if let Some(n) = v.as_number() {
                // n * u^(n-1) * u'
                return mul(vec![num(n), pow(u, num(n - 1.0)), du]);
            }
            if !depends_on(&v, x) {
                // v * u^(v-1) * u'
                let v_minus_1 = add(vec![v.clone(), num(-1.0)]);
                return mul(vec![v, pow(u, v_minus_1), du]);
            }
            let dv = derivative(&v, x);
            let uv = pow(u.clone(), v.clone());
            // u^v * (v' log u + v u'/u)
            let log_u = call(Func::Log, vec![u.clone()]);
            let inner = add(vec![mul(vec![dv, log_u]), mul(vec![v, du, recip(u)])]);
            mul(vec![uv, inner])
        }
        Expr::Call(f, args) => {
            let args: Vec<Expr> = args.iter().map(simplify).collect();
            call_derivative(*f, &args, x)
        }
        Expr::If(c, a, b) => iff(simplify_cond(c), derivative(a, x), derivative(b, x)),
    }
}

fn call_derivative(f: Func, args: &[Expr], x: &str) -> Expr {
    let u = args[0].clone();
    let du = derivative(&u, x);
    let c1 = |g: Func| call(g, vec![u.clone()]);
    let one_minus_u2 = || add(vec![num(1.0), scale(-1.0, pow(u.clone(), num(2.0)))]);
    let outer = match f {
        Func::Sqrt => scale(0.5, recip(c1(Func::Sqrt))),
        Func::Exp => c1(Func::Exp),
        Func::Log => recip(u.clone()),
        Func::Log10 => recip(mul(vec![u.clone(), call(Func::Log, vec![num(10.0)])])),
        Func::Sin => c1(Func::Cos),
        Func::Cos => scale(-1.0, c1(Func::Sin)),
        Func::Tan => pow(c1(Func::Cos), num(-2.0)),
        Func::Asin => pow(one_minus_u2(), num(-0.5)),
        Func::Acos => scale(-1.0, pow(one_minus_u2(), num(-0.5))),
        Func::Atan => recip(add(vec![num(1.0), pow(u.clone(), num(2.0))])),
        Func::Sinh => c1(Func::Cosh),
        Func::Cosh => c1(Func::Sinh),
        Func::Tanh => pow(c1(Func::Cosh), num(-2.0)),
        Func::Abs => iff(
            Cond::Cmp(CmpOp::Ge, u.clone(), num(0.0)),
            num(1.0),
            num(-1.0),
        ),
        Func::Atan2 | Func::Min | Func::Max => return two_arg(f, args, x),
    };
    mul(vec![outer, du])
}

fn two_arg(f: Func, args: &[Expr], x: &str) -> Expr {
    let (a, b) = (args[0].clone(), args[1].clone());
    let (da, db) = (derivative(&a, x), derivative(&b, x));
    match f {
        // atan2(y, x)' = (x y' - y x') / (x^2 + y^2)
        Func::Atan2 => {
            let num_ = add(vec![
                mul(vec![b.clone(), da]),
                scale(-1.0, mul(vec![a.clone(), db])),
            ]);
            let den = add(vec![pow(a, num(2.0)), pow(b, num(2.0))]);
            mul(vec![num_, recip(den)])
        }
        Func::Min => iff(Cond::Cmp(CmpOp::Le, a, b), da, db),
        _ => iff(Cond::Cmp(CmpOp::Ge, a, b), da, db),
    }
}

#[cfg(test)]
mod tests {
    use super::super::parse;

    fn d(src: &str, x: &str) -> String {
        parse(src).unwrap().diff(x).to_string()
    }

    #[test]
    fn power_law_derivative_is_compact() {
        assert_eq!(d("rho0*(R/R0)^(-p)", "R"), "-p*rho0*(R/R0)^(-p - 1)/R0");
    }

    #[test]
    fn power_rule_is_finite_where_the_base_vanishes() {
        // d/dx (x/a)^n = n x^(n-1)/a^n: the power rule d/dx u^n = n u^(n-1)
        // with the chain rule (any calculus text, e.g. Stewart, Calculus,
        // ch. 3; cited from memory). At x = 0 it is 0 for n > 1 and 1/a for
        // n = 1, not the 0/0 of n*(x/a)^n/x.
        let e = parse("(x/a)^n").unwrap().diff("x");
        assert_eq!(e.to_string(), "n*(x/a)^(n - 1)/a");
        for (x, a, n) in [
            (0.0, 0.5, 2.5),
            (0.0, 2.0, 1.0),
            (0.0, 0.7, 3.0),
            (0.3, 0.5, 2.5),
        ] {
            let look = |name: &str| match name {
                "x" => Some(x),
                "a" => Some(a),
                "n" => Some(n),
                _ => None,
            };
            let want = n * f64::powf(x, n - 1.0) / a.powf(n);
            for got in [e.eval(&look).unwrap(), e.eval_extended(&look).unwrap()] {
                assert!(
                    (got - want).abs() < 1e-14 * (1.0 + want.abs()),
                    "{x} {a} {n}: {got}"
                );
            }
        }
    }

    #[test]
    fn basic_rules() {
        assert_eq!(d("x^3", "x"), "3*x^2");
        assert_eq!(d("5", "x"), "0");
        assert_eq!(d("y*x", "x"), "y");
        assert_eq!(d("sin(x)", "x"), "cos(x)");
        assert_eq!(d("exp(2*x)", "x"), "2*exp(2*x)");
        assert_eq!(d("log(x)", "x"), "1/x");
        assert_eq!(d("abs(x)", "x"), "1 if x >= 0 else -1");
        assert_eq!(d("min(x, 1)", "x"), "1 if x <= 1 else 0");
        assert_eq!(d("x^2 if x < 1 else 2*x", "x"), "2*x if x < 1 else 2");
        assert_eq!(
            d("x^3 if not 0 < x <= 1 else sin(x)", "x"),
            "3*x^2 if not 0 < x <= 1 else cos(x)"
        );
        assert_eq!(d("x - x", "x"), "0");
    }

    #[test]
    fn general_power_and_atan2_values() {
        let e = parse("x^x + atan2(x, 2)").unwrap().diff("x");
        let x = 1.3_f64;
        let want = x.powf(x) * (x.ln() + 1.0) + 2.0 / (x * x + 4.0);
        let got = e.eval(&|_| Some(x)).unwrap();
        assert!((got - want).abs() < 1e-12, "{e}: {got} vs {want}");
    }
}
