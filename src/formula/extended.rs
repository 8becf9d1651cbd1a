//! Extended-precision evaluation (256-bit binary floats from the
//! `astro-float` crate), rounded to f64 only at the end. Used for
//! probabilistic identity testing, where f64 cancellation would hide or fake
//! differences. Inputs are f64 and enter exactly; `pi` is computed to full
//! precision.

use super::expr::is_builtin_constant;
use super::{CmpOp, Cond, Expr, FormulaError, Func};
use astro_float::{BigFloat, Consts, RoundingMode, Sign};

/// Working precision in bits.
pub(crate) const PRECISION: usize = 256;
const RM: RoundingMode = RoundingMode::ToEven;

struct Ctx<'a> {
    cc: Consts,
    lookup: &'a dyn Fn(&str) -> Option<f64>,
}

/// Evaluate at 256 bits and round to f64.
pub(crate) fn eval_extended(
    e: &Expr,
    lookup: &dyn Fn(&str) -> Option<f64>,
) -> Result<f64, FormulaError> {
    let cc = Consts::new().map_err(|err| FormulaError::Syntax {
        span: 0..0,
        message: format!("extended precision unavailable: {err:?}"),
    })?;
    let mut ctx = Ctx { cc, lookup };
    Ok(to_f64(&ctx.eval(e)?))
}

fn big(v: f64) -> BigFloat {
    BigFloat::from_f64(v, PRECISION)
}

/// Round a big float to the nearest f64 (via its top 64 mantissa bits).
pub(crate) fn to_f64(x: &BigFloat) -> f64 {
    if x.is_nan() {
        return f64::NAN;
    }
    if x.is_inf() {
        return if x.is_inf_pos() {
            f64::INFINITY
        } else {
            f64::NEG_INFINITY
        };
    }
    if x.is_zero() {
        return 0.0;
    }
    let Some((m, _, sign, exp, _)) = x.as_raw_parts() else {
        return f64::NAN;
    };
    // The mantissa is normalised: the top bit of the last word is set, and
    // the value is 0.m * 2^exp. Take the top 64 bits, plus a sticky bit.
    #[allow(clippy::useless_conversion)] // `Word` is u32 on 32-bit targets (then 32 bits are taken)
    let top: u64 = (*m.last().unwrap_or(&0)).into();
    let sticky = m.iter().rev().skip(1).any(|w| *w != 0);
    let top = if sticky { top | 1 } else { top };
    let mag = (top as f64) * 2f64.powi(-64);
    let v = scale2(mag, exp as i64);
    if sign == Sign::Neg {
        -v
    } else {
        v
    }
}

/// `v * 2^e` without intermediate overflow or underflow.
fn scale2(mut v: f64, mut e: i64) -> f64 {
    while e > 1000 {
        v *= 2f64.powi(1000);
        e -= 1000;
    }
    while e < -1000 {
        v *= 2f64.powi(-1000);
        e += 1000;
    }
    v * 2f64.powi(e as i32)
}

impl Ctx<'_> {
    fn eval(&mut self, e: &Expr) -> Result<BigFloat, FormulaError> {
        Ok(match e {
            Expr::Num(v) => big(*v),
            Expr::Name(n) => match (self.lookup)(n) {
                Some(v) => big(v),
                None if is_builtin_constant(n) => self.cc.pi(PRECISION, RM),
                None => {
                    return Err(FormulaError::UnknownName {
                        name: n.clone(),
                        span: 0..0,
                        suggestion: None,
                    })
                }
            },
            Expr::Add(ts) => {
                let mut s = big(0.0);
                for t in ts {
                    s = s.add(&self.eval(t)?, PRECISION, RM);
                }
                s
            }
            Expr::Mul(fs) => {
                let mut s = big(1.0);
                for f in fs {
                    s = s.mul(&self.eval(f)?, PRECISION, RM);
                }
                s
            }
            Expr::Pow(b, x) => {
                let b = self.eval(b)?;
                let x = self.eval(x)?;
                self.pow(&b, &x)
            }
            Expr::Call(f, args) => {
                let a = self.eval(&args[0])?;
                let b = match args.get(1) {
                    Some(x) => Some(self.eval(x)?),
                    None => None,
                };
                self.call(*f, &a, b.as_ref())
            }
            Expr::If(c, a, b) => {
                if self.cond(c)? {
                    self.eval(a)?
                } else {
                    self.eval(b)?
                }
            }
        })
    }

    fn pow(&mut self, b: &BigFloat, x: &BigFloat) -> BigFloat {
        if x.is_int() {
            // Exact integer powers, valid for negative bases too.
            let xf = to_f64(x);
            if xf.abs() <= 1e6 {
                let n = xf.abs() as usize;
                let p = b.powi(n, PRECISION, RM);
                return if xf < 0.0 {
                    big(1.0).div(&p, PRECISION, RM)
                } else {
                    p
                };
            }
        }
        if b.is_negative() {
            return BigFloat::nan(None);
        }
        if b.is_zero() {
            return if x.is_positive() {
                big(0.0)
            } else {
                big(f64::INFINITY)
            };
        }
        // b^x = exp(x ln b), at fixed precision (the library's own `pow`
        // raises the working precision with the size of x, which is slow).
        let y = x.mul(&b.ln(PRECISION, RM, &mut self.cc), PRECISION, RM);
        exp_bounded(&y, &mut self.cc)
    }

    fn call(&mut self, f: Func, a: &BigFloat, b: Option<&BigFloat>) -> BigFloat {
        let cc = &mut self.cc;
        let p = PRECISION;
        match f {
            Func::Sqrt => a.sqrt(p, RM),
            Func::Exp => exp_bounded(a, cc),
            Func::Log => a.ln(p, RM, cc),
            Func::Log10 => a.log10(p, RM, cc),
            Func::Sin => a.sin(p, RM, cc),
            Func::Cos => a.cos(p, RM, cc),
            Func::Tan => a.tan(p, RM, cc),
            Func::Asin => a.asin(p, RM, cc),
            Func::Acos => a.acos(p, RM, cc),
            Func::Atan => a.atan(p, RM, cc),
            Func::Sinh | Func::Cosh if beyond_f64(a) => {
                let e = exp_bounded(&a.abs(), cc);
                if f == Func::Sinh && a.is_negative() {
                    e.neg()
                } else {
                    e
                }
            }
            Func::Sinh => a.sinh(p, RM, cc),
            Func::Cosh => a.cosh(p, RM, cc),
            Func::Tanh => a.tanh(p, RM, cc),
            Func::Abs => a.abs(),
            Func::Min | Func::Max => {
                let b = b.cloned().unwrap_or_else(|| big(f64::NAN));
                match a.cmp(&b) {
                    None => BigFloat::nan(None),
                    Some(o) if (o <= 0) == (f == Func::Min) => a.clone(),
                    Some(_) => b,
                }
            }
            Func::Atan2 => {
                let x = b.cloned().unwrap_or_else(|| big(f64::NAN));
                atan2(a, &x, cc)
            }
        }
    }

    fn cond(&mut self, c: &Cond) -> Result<bool, FormulaError> {
        Ok(match c {
            Cond::Cmp(op, a, b) => {
                let (a, b) = (self.eval(a)?, self.eval(b)?);
                match a.cmp(&b) {
                    None => *op == CmpOp::Ne,
                    Some(o) => match op {
                        CmpOp::Lt => o < 0,
                        CmpOp::Le => o <= 0,
                        CmpOp::Gt => o > 0,
                        CmpOp::Ge => o >= 0,
                        CmpOp::Eq => o == 0,
                        CmpOp::Ne => o != 0,
                    },
                }
            }
            Cond::And(a, b) => self.cond(a)? & self.cond(b)?,
            Cond::Or(a, b) => self.cond(a)? | self.cond(b)?,
            Cond::Not(a) => !self.cond(a)?,
        })
    }
}

/// True if exp(|a|) overflows f64 by far (|a| > 10^5).
fn beyond_f64(a: &BigFloat) -> bool {
    a.abs().cmp(&big(1e5)).is_some_and(|o| o > 0)
}

/// exp(a), returning +inf or 0 directly when the result is far outside the
/// f64 range (the library would otherwise work at huge precision).
fn exp_bounded(a: &BigFloat, cc: &mut Consts) -> BigFloat {
    if a.is_nan() {
        return BigFloat::nan(None);
    }
    if beyond_f64(a) {
        return if a.is_negative() {
            big(0.0)
        } else {
            big(f64::INFINITY)
        };
    }
    a.exp(PRECISION, RM, cc)
}

/// atan2(y, x) from atan with quadrant correction.
fn atan2(y: &BigFloat, x: &BigFloat, cc: &mut Consts) -> BigFloat {
    let p = PRECISION;
    if x.is_nan() || y.is_nan() {
        return BigFloat::nan(None);
    }
    let pi = cc.pi(p, RM);
    if x.is_zero() {
        if y.is_zero() {
            return big(0.0);
        }
        let half = pi.div(&big(2.0), p, RM);
        return if y.is_negative() { half.neg() } else { half };
    }
    let t = y.div(x, p, RM).atan(p, RM, cc);
    if x.is_positive() {
        t
    } else if y.is_negative() {
        t.sub(&pi, p, RM)
    } else {
        t.add(&pi, p, RM)
    }
}

#[cfg(test)]
mod tests {
    use super::super::parse;
    use super::*;

    fn ext(s: &str) -> f64 {
        eval_extended(&parse(s).unwrap(), &|n| (n == "x").then_some(0.7)).unwrap()
    }

    #[test]
    fn is_genuinely_extended() {
        let v = ext("(1 + 1e-20) - 1");
        assert!((v - 1e-20).abs() < 1e-30, "{v}");
        let f = parse("(1 + 1e-20) - 1").unwrap().eval(&|_| None).unwrap();
        assert!(f.abs() < 1e-300, "f64 loses it: {f}");
        assert!(ext("exp(log(3)) - 3").abs() < 3e-50);
        assert!((ext("4*atan(1) - pi")).abs() < 1e-70);
    }

    #[test]
    fn huge_arguments_stay_fast_and_overflow_like_f64() {
        let start = std::time::Instant::now();
        assert!((ext("sin(1e300)") - 1e300f64.sin()).abs() < 1e-12);
        assert!(ext("exp(1e300) + cosh(-1e6) + 2^(1e300*x)").is_infinite());
        assert!(ext("exp(-1e300) + 0.5^(1e300*x)").abs() < 1e-300);
        assert!(start.elapsed().as_secs_f64() < 5.0);
    }

    #[test]
    fn agrees_with_f64_on_every_function() {
        let src = "sqrt(x) + exp(x) + log(x) + log10(x) + sin(x) + cos(x) + tan(x) + asin(x) \
                   + acos(x) + atan(x) + atan2(x, -2) + atan2(-x, -2) + sinh(x) + cosh(x) \
                   + tanh(x) + abs(-x) + min(x, 2) + max(x, 2) + x^-3 + (-x)^3 + 2^x \
                   + (1 if x > 0.5 and x < 1 else 0) + (1 if not 0.5 < x < 1 else 2)";
        let e = parse(src).unwrap();
        let a = e.eval(&|_| Some(0.7)).unwrap();
        let b = ext(src);
        assert!((a - b).abs() < 1e-13 * a.abs(), "{a} vs {b}");
        assert!(ext("(-2)^0.5").is_nan());
        assert!((to_f64(&big(-3.25e-200)) + 3.25e-200).abs() < 1e-214);
    }
}
