//! Whether the given laws are defined on the whole grid: a logarithm or
//! square root of a negative number, an inverse sine beyond ±1, a division
//! by zero (a negative power of a base that is zero, or changes sign between
//! two scan points) inside the domain is bad input, not an equilibrium that
//! fails. The message names the law, the part of it at fault, the point and
//! the value there.
//!
//! Owns: finding the first such fault. Does not own: the scan points (the
//! domain) or what the laws mean.

use crate::formula::{Expr, Func};
use crate::model::Model;

use super::{show, ClosureError};

/// A part of a formula that is only defined for some values of its argument.
struct Guard<'a> {
    /// The part (`log(R - 1)`).
    part: &'a Expr,
    /// Its argument (`R - 1`).
    arg: &'a Expr,
    kind: Kind,
}

#[derive(Clone, Copy)]
enum Kind {
    Log,
    Sqrt,
    Unit,
    Divide,
}

fn guards<'a>(e: &'a Expr, out: &mut Vec<Guard<'a>>) {
    match e {
        Expr::Num(_) | Expr::Name(_) => {}
        Expr::Add(ts) | Expr::Mul(ts) => ts.iter().for_each(|t| guards(t, out)),
        Expr::Pow(b, x) => {
            guards(b, out);
            guards(x, out);
            if x.as_number().is_some_and(|n| n < 0.0) {
                out.push(Guard {
                    part: e,
                    arg: b,
                    kind: Kind::Divide,
                });
            }
        }
        Expr::Call(f, args) => {
            args.iter().for_each(|a| guards(a, out));
            let kind = match f {
                Func::Log | Func::Log10 => Some(Kind::Log),
                Func::Sqrt => Some(Kind::Sqrt),
                Func::Asin | Func::Acos => Some(Kind::Unit),
                _ => None,
            };
            if let (Some(kind), [a]) = (kind, args.as_slice()) {
                out.push(Guard {
                    part: e,
                    arg: a,
                    kind,
                });
            }
        }
        // The branches of a conditional are defined only where they are
        // taken: leave them to the value check.
        Expr::If(..) => {}
    }
}

/// The first law of `model` that is undefined somewhere on `pts`, as an
/// error naming where and why.
pub fn check(model: &Model, pts: &[f64]) -> Result<(), ClosureError> {
    let s = model.coordinate();
    let laws = [
        model.density.as_ref(),
        model.sound_speed_sq.as_ref(),
        model.pressure.as_ref(),
        model.rotation.as_ref(),
    ];
    for law in laws.into_iter().flatten() {
        let mut gs = Vec::new();
        guards(&law.expr, &mut gs);
        for g in &gs {
            let at = |x: f64| g.arg.eval(&model.line_lookup(x)).unwrap_or(f64::NAN);
            let vals: Vec<f64> = pts.iter().map(|&x| at(x)).collect();
            for (i, (&x, &v)) in pts.iter().zip(&vals).enumerate() {
                let why = match g.kind {
                    Kind::Log if v <= 0.0 => Some(format!(
                        "the logarithm of {} ({} = {})",
                        if v == 0.0 {
                            "zero"
                        } else {
                            "a negative number"
                        },
                        g.arg,
                        show(v)
                    )),
                    Kind::Sqrt if v < 0.0 => Some(format!(
                        "the square root of a negative number ({} = {})",
                        g.arg,
                        show(v)
                    )),
                    Kind::Unit if v.abs() > 1.0 => Some(format!(
                        "an inverse sine or cosine beyond ±1 ({} = {})",
                        g.arg,
                        show(v)
                    )),
                    Kind::Divide if v == 0.0 => Some(format!("a division by zero ({} = 0)", g.arg)),
                    Kind::Divide
                        if i + 1 < vals.len() && v * vals[i + 1] < 0.0 && v.is_finite() =>
                    {
                        let x1 = pts[i + 1];
                        let zero = super::switches::refine(&at, x, x1);
                        return Err(undefined(
                            law,
                            g.part,
                            &format!(
                                "a division by zero: {} changes sign between {s} = {} and {s} = {}, \
                                 and is zero near {s} = {}",
                                g.arg,
                                show(x),
                                show(x1),
                                show(zero)
                            ),
                        ));
                    }
                    _ => None,
                };
                if let Some(why) = why {
                    return Err(undefined(
                        law,
                        g.part,
                        &format!("{why} at {s} = {}", show(x)),
                    ));
                }
            }
        }
    }
    Ok(())
}

fn undefined(law: &crate::model::Law, part: &Expr, why: &str) -> ClosureError {
    ClosureError::Incomplete(format!(
        "{}: the law `{}` is undefined inside the grid: `{part}` is {why}; change the law, or the \
         grid so that it lies where the law is defined",
        law.origin, law.expr
    ))
}
