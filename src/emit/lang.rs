//! The file layout of each emitted language around the formulas: the
//! comment block, the constants, the interpolant's tables and its
//! evaluation (bisection of the breaks, then Clenshaw's recurrence, written
//! operation for operation as [`super::chebyshev::clenshaw`]), and the
//! function. Every formula goes through the one walker of
//! [`crate::formula::code`] with the language's [`Dialect`].

use super::{Emission, Lang, INTEGRAL};
use crate::formula::code::{Dialect, C, FORTRAN, NUMPY};
use crate::formula::Expr;
use std::fmt::Write;

/// Identifier of a parameter's constant.
fn constant(n: &str) -> String {
    format!("p_{n}")
}

/// The source text of `e` in `lang`, or why it cannot be written.
pub fn write(e: &Emission, lang: Lang) -> Result<String, String> {
    let d = match lang {
        Lang::C => &C,
        Lang::Fortran => &FORTRAN,
        Lang::Python => &NUMPY,
    };
    if lang == Lang::Fortran {
        // Fortran does not tell `p_M` from `p_m`.
        let mut seen = std::collections::BTreeMap::new();
        for n in e
            .constants
            .iter()
            .map(|(n, _)| n.as_str())
            .chain(e.coords.iter().copied())
        {
            if let Some(other) = seen.insert(n.to_ascii_lowercase(), n) {
                return Err(format!(
                    "--lang fortran: the names `{other}` and `{n}` differ only in case, which \
                     Fortran does not distinguish; rename one (or emit C or Python)"
                ));
            }
        }
    }
    // Shared subexpressions computed once, as temporaries.
    let fields: Vec<Expr> = scalars(e)
        .iter()
        .map(|(_, x)| (*x).clone())
        .chain(vectors(e).iter().flat_map(|(_, v)| v.iter().cloned()))
        .collect();
    let (temps, shared) = crate::formula::code::share(&fields, "@tmp_");
    let mut e = e.clone();
    {
        let mut it = shared.into_iter();
        for x in [&mut e.density, &mut e.pressure, &mut e.potential] {
            *x = it.next().expect("one per field");
        }
        for v in [&mut e.velocity, &mut e.gravity, &mut e.pressure_accel] {
            for x in v.iter_mut() {
                *x = it.next().expect("one per field");
            }
        }
    }
    let e = &e;
    let coords = e.coords.clone();
    let name = move |n: &str| -> String {
        if let Some(t) = n.strip_prefix('@').filter(|t| t.starts_with("tmp_")) {
            t.to_string()
        } else if n == "pi" {
            d.number(std::f64::consts::PI)
        } else if n == INTEGRAL {
            "integral".into()
        } else if coords.contains(&n) {
            n.to_string()
        } else {
            constant(n)
        }
    };
    let code = |x: &Expr| d.code(x, &name);
    let temps: Vec<(String, String)> = temps
        .iter()
        .map(|(n, x)| (n.trim_start_matches('@').to_string(), code(x)))
        .collect();
    let mut text = match lang {
        Lang::C => c(e, d, &code, &temps),
        Lang::Fortran => fortran(e, d, &code, &temps),
        Lang::Python => python(e, d, &code, &temps),
    };
    if let Some(f) = &e.forcing {
        forcing(&mut text, e, d, lang, f, &code);
    }
    Ok(text)
}

/// The function `<ident>_forcing` of an audit: the manufactured force
/// density at a point, components in the basis (no shared temporaries:
/// each component is written out).
fn forcing(
    s: &mut String,
    e: &Emission,
    d: &Dialect,
    lang: Lang,
    f: &[Expr; 3],
    code: &dyn Fn(&Expr) -> String,
) {
    let id = &e.ident;
    let coords = e.coords.join(", ");
    let about = format!(
        "The manufactured force density at ({coords}) that makes this state steady: add it \
         to the momentum equation (Roache 2002); components in the basis above"
    );
    match lang {
        Lang::C => {
            let args: Vec<String> = e.coords.iter().map(|c| format!("double {c}")).collect();
            let _ = writeln!(
                s,
                "\n/* {about}. */\nSTILLPOINT_FN void {id}_forcing({}, double forcing[3])\n{{",
                args.join(", ")
            );
            for (n, v) in &e.constants {
                let _ = writeln!(
                    s,
                    "    const double {} = {};\n    (void){};",
                    constant(n),
                    d.number(*v),
                    constant(n)
                );
            }
            for (k, x) in f.iter().enumerate() {
                let _ = writeln!(s, "    forcing[{k}] = {};", code(x));
            }
            s.push_str("}\n");
        }
        Lang::Fortran => {
            let mut sub = format!(
                "\n  ! {about}.\n  pure subroutine {id}_forcing({coords}, forcing)\n    \
                 real(real64), intent(in) :: {coords}\n    \
                 real(real64), intent(out) :: forcing(3)\n"
            );
            for (k, x) in f.iter().enumerate() {
                sub += &fortran_lines("    ", &format!("forcing({}) = {}", k + 1, code(x)));
            }
            let _ = writeln!(sub, "  end subroutine {id}_forcing");
            let end = format!("end module {id}_mod");
            if let Some(at) = s.rfind(&end) {
                s.insert_str(at, &sub[1..]);
            }
            let public = format!("  public :: {id}\n");
            if let Some(at) = s.find(&public) {
                s.insert_str(at + public.len(), &format!("  public :: {id}_forcing\n"));
            }
        }
        Lang::Python => {
            let _ = writeln!(
                s,
                "\n\ndef {id}_forcing({coords}):\n    \"\"\"{about}.\"\"\""
            );
            for c in &e.coords {
                let _ = writeln!(s, "    {c} = np.asarray({c}, dtype=float)");
            }
            let _ = writeln!(s, "    zero = np.zeros(np.broadcast({coords}).shape)");
            s.push_str("    with np.errstate(all=\"ignore\"):\n");
            let parts: Vec<String> = f.iter().map(|x| format!("zero + ({})", code(x))).collect();
            let _ = writeln!(s, "        return ({})", parts.join(", "));
        }
    }
}

/// The fields in order with their names in the emitted code.
fn scalars(e: &Emission) -> [(&'static str, &Expr); 3] {
    [
        ("density", &e.density),
        ("pressure", &e.pressure),
        ("potential", &e.potential),
    ]
}

fn vectors(e: &Emission) -> [(&'static str, &[Expr; 3]); 3] {
    [
        ("velocity", &e.velocity),
        ("gravity", &e.gravity),
        ("pressure_accel", &e.pressure_accel),
    ]
}

/// Temporaries: name and code.
type Temps = [(String, String)];

fn c(e: &Emission, d: &Dialect, code: &dyn Fn(&Expr) -> String, temps: &Temps) -> String {
    let id = &e.ident;
    let mut s = String::from("/*\n");
    for l in &e.comment {
        // `*/` cannot occur in a formula, but be safe.
        let _ = writeln!(s, "{}", format!(" * {}", l.replace("*/", "* /")).trim_end());
    }
    let _ = writeln!(
        s,
        " *\n * Plain C99, math.h only. Every function is declared STILLPOINT_FN (default\n \
         * `static inline`) and every table STILLPOINT_TABLE (default `static const`):\n \
         * define them before including this file to compile it as GPU device code, e.g.\n \
         * -DSTILLPOINT_FN='__host__ __device__ static inline' and\n \
         * -DSTILLPOINT_TABLE='__device__ static const' for CUDA or HIP.\n */"
    );
    s += "#ifndef STILLPOINT_FN\n#define STILLPOINT_FN static inline\n#endif\n";
    s += "#ifndef STILLPOINT_TABLE\n#define STILLPOINT_TABLE static const\n#endif\n";
    s += "#include <math.h>\n\n";
    s += "#ifndef STILLPOINT_POINT_DEFINED\n#define STILLPOINT_POINT_DEFINED\n";
    s += "/* The background at one point; vectors in the frame's basis. */\n";
    s += "struct stillpoint_point {\n    double density, pressure, potential;\n    \
          double velocity[3], gravity[3], pressure_accel[3];\n};\n#endif\n\n";
    let args: Vec<String> = e.coords.iter().map(|c| format!("double {c}")).collect();
    if let Some(i) = &e.integral {
        let breaks = i.breaks();
        let n = i.pieces.len();
        let mut start = vec![0usize];
        for p in &i.pieces {
            start.push(start.last().unwrap() + p.coefficients.len());
        }
        let list = |v: &[f64]| -> String {
            v.iter()
                .map(|x| d.number(*x))
                .collect::<Vec<_>>()
                .chunks(4)
                .map(|c| format!("    {}", c.join(", ")))
                .collect::<Vec<_>>()
                .join(",\n")
        };
        let _ = writeln!(
            s,
            "STILLPOINT_TABLE double {id}_breaks[{}] = {{\n{}\n}};",
            n + 1,
            list(&breaks)
        );
        let starts: Vec<String> = start.iter().map(|x| x.to_string()).collect();
        let _ = writeln!(
            s,
            "STILLPOINT_TABLE int {id}_start[{}] = {{{}}};",
            n + 1,
            starts.join(", ")
        );
        let all: Vec<f64> = i
            .pieces
            .iter()
            .flat_map(|p| p.coefficients.clone())
            .collect();
        let _ = writeln!(
            s,
            "STILLPOINT_TABLE double {id}_coefficients[{}] = {{\n{}\n}};\n",
            all.len(),
            list(&all)
        );
        let _ = writeln!(
            s,
            "/* {q} at {c}: the piece holding it by bisection, then Clenshaw's recurrence. */\n\
             STILLPOINT_FN double {id}_integral(double {c})\n{{\n    \
             int lo = 0, hi = {n}, k;\n    double a, b, t, b1 = 0.0, b2 = 0.0, b0;\n    \
             if (!({c} >= {id}_breaks[0] && {c} <= {id}_breaks[{n}])) return NAN;\n    \
             while (hi - lo > 1) {{\n        int m = (lo + hi) / 2;\n        \
             if ({c} < {id}_breaks[m]) hi = m; else lo = m;\n    }}\n    \
             a = {id}_breaks[lo];\n    b = {id}_breaks[lo + 1];\n    \
             t = (2.0*{c} - (a + b))/(b - a);\n    \
             for (k = {id}_start[lo + 1] - 1; k > {id}_start[lo]; k--) {{\n        \
             b0 = {id}_coefficients[k] + 2.0*t*b1 - b2;\n        b2 = b1;\n        b1 = b0;\n    }}\n    \
             return {id}_coefficients[{id}_start[lo]] + t*b1 - b2;\n}}\n",
            q = i.quantity,
            c = e.coords[0],
        );
    }
    let _ = writeln!(
        s,
        "/* The background at ({}); fills *out. */\nSTILLPOINT_FN void {id}({}, struct stillpoint_point *out)\n{{",
        e.coords.join(", "),
        args.join(", ")
    );
    for (n, v) in &e.constants {
        let _ = writeln!(s, "    const double {} = {};", constant(n), d.number(*v));
    }
    if e.integral.is_some() {
        let _ = writeln!(
            s,
            "    const double integral = {id}_integral({});",
            e.coords[0]
        );
    }
    for (n, x) in temps {
        let _ = writeln!(s, "    const double {n} = {x};");
    }
    for (n, x) in scalars(e) {
        let _ = writeln!(s, "    out->{n} = {};", code(x));
    }
    for (n, v) in vectors(e) {
        for (k, x) in v.iter().enumerate() {
            let _ = writeln!(s, "    out->{n}[{k}] = {};", code(x));
        }
    }
    s += "}\n";
    s
}

/// A Fortran statement cut into lines of at most 100 characters, each
/// continued with `&` at the end and resumed with `&` at the start (which
/// lets a cut fall anywhere, inside a name or a number).
fn fortran_lines(indent: &str, stmt: &str) -> String {
    let chars: Vec<char> = stmt.chars().collect();
    if chars.len() <= 100 {
        return format!("{indent}{stmt}\n");
    }
    let mut out = String::new();
    for (i, chunk) in chars.chunks(100).enumerate() {
        let text: String = chunk.iter().collect();
        let lead = if i == 0 { "" } else { "&" };
        let tail = if (i + 1) * 100 < chars.len() { "&" } else { "" };
        let _ = writeln!(out, "{indent}{lead}{text}{tail}");
    }
    out
}

fn fortran(e: &Emission, d: &Dialect, code: &dyn Fn(&Expr) -> String, temps: &Temps) -> String {
    let id = &e.ident;
    let mut s = String::new();
    for l in &e.comment {
        let _ = writeln!(s, "{}", format!("! {l}").trim_end());
    }
    s += "!\n! Fortran 2008: `use` the module and call the subroutine; inputs and outputs\n\
          ! are real(real64); vectors hold the three components in the basis above.\n";
    let _ = writeln!(s, "module {id}_mod");
    s += "  use, intrinsic :: iso_fortran_env, only: real64\n  use, intrinsic :: ieee_arithmetic\n";
    s += "  implicit none\n  private\n";
    let _ = writeln!(s, "  public :: {id}");
    for (n, v) in &e.constants {
        let _ = writeln!(
            s,
            "  real(real64), parameter :: {} = {}",
            constant(n),
            d.number(*v)
        );
    }
    let array = |name: &str, v: &[f64]| -> String {
        let items: Vec<String> = v.iter().map(|x| d.number(*x)).collect();
        let rows: Vec<String> = items
            .chunks(3)
            .map(|c| format!("    {}", c.join(", ")))
            .collect();
        format!(
            "  real(real64), parameter :: {name}(0:{}) = [ &\n{} ]\n",
            v.len() - 1,
            rows.join(", &\n")
        )
    };
    if let Some(i) = &e.integral {
        s += &array("breaks", &i.breaks());
        for (k, p) in i.pieces.iter().enumerate() {
            s += &array(&format!("c_{k}"), &p.coefficients);
        }
    }
    s += "contains\n";
    if let Some(i) = &e.integral {
        let n = i.pieces.len();
        let c = e.coords[0];
        let _ = writeln!(
            s,
            "  ! Sum of c(k) T_k(t) by Clenshaw's recurrence.\n  \
             pure function clenshaw(c, t) result(y)\n    \
             real(real64), intent(in) :: c(0:), t\n    real(real64) :: y, b0, b1, b2\n    \
             integer :: k\n    b1 = 0.0_real64\n    b2 = 0.0_real64\n    \
             do k = ubound(c, 1), 1, -1\n      b0 = c(k) + 2.0_real64*t*b1 - b2\n      \
             b2 = b1\n      b1 = b0\n    end do\n    y = c(0) + t*b1 - b2\n  \
             end function clenshaw\n\n  \
             ! {q} at {c}: the piece holding it by bisection, then Clenshaw.\n  \
             pure function integral_at({c}) result(q)\n    \
             real(real64), intent(in) :: {c}\n    real(real64) :: q, t\n    \
             integer :: lo, hi, m\n    \
             if (.not. ({c} >= breaks(0) .and. {c} <= breaks({n}))) then\n      \
             q = ieee_value(0.0_real64, ieee_quiet_nan)\n      return\n    end if\n    \
             lo = 0\n    hi = {n}\n    do while (hi - lo > 1)\n      m = (lo + hi)/2\n      \
             if ({c} < breaks(m)) then\n        hi = m\n      else\n        lo = m\n      \
             end if\n    end do\n    \
             t = (2.0_real64*{c} - (breaks(lo) + breaks(lo + 1)))/(breaks(lo + 1) - breaks(lo))\n    \
             select case (lo)",
            q = i.quantity
        );
        for k in 0..n {
            let _ = writeln!(s, "    case ({k})\n      q = clenshaw(c_{k}, t)");
        }
        s += "    case default\n      q = ieee_value(0.0_real64, ieee_quiet_nan)\n    end select\n";
        s += "  end function integral_at\n\n";
    }
    let _ = writeln!(
        s,
        "  ! The background at ({}).\n  pure subroutine {id}({}, density, pressure, potential, \
         velocity, gravity, pressure_accel)",
        e.coords.join(", "),
        e.coords.join(", ")
    );
    let _ = writeln!(s, "    real(real64), intent(in) :: {}", e.coords.join(", "));
    s += "    real(real64), intent(out) :: density, pressure, potential\n";
    s += "    real(real64), intent(out) :: velocity(3), gravity(3), pressure_accel(3)\n";
    if e.integral.is_some() {
        s += "    real(real64) :: integral\n";
    }
    for (n, _) in temps {
        let _ = writeln!(s, "    real(real64) :: {n}");
    }
    if e.integral.is_some() {
        let _ = writeln!(s, "    integral = integral_at({})", e.coords[0]);
    }
    for (n, x) in temps {
        s += &fortran_lines("    ", &format!("{n} = {x}"));
    }
    for (n, x) in scalars(e) {
        s += &fortran_lines("    ", &format!("{n} = {}", code(x)));
    }
    for (n, v) in vectors(e) {
        for (k, x) in v.iter().enumerate() {
            s += &fortran_lines("    ", &format!("{n}({}) = {}", k + 1, code(x)));
        }
    }
    let _ = writeln!(s, "  end subroutine {id}\nend module {id}_mod");
    s
}

fn python(e: &Emission, d: &Dialect, code: &dyn Fn(&Expr) -> String, temps: &Temps) -> String {
    let id = &e.ident;
    let mut s = String::from("\"\"\"\n");
    for l in &e.comment {
        let _ = writeln!(
            s,
            "{}",
            l.replace('\\', "\\\\").replace("\"\"\"", "\"\" \"")
        );
    }
    let _ = writeln!(
        s,
        "\nPython 3 with NumPy: {id}({}) takes numbers or arrays (broadcast together) and\n\
         returns a dict of arrays: density, pressure, potential, and the 3-tuples\n\
         velocity, gravity, pressure_accel (components in the basis above).\n\"\"\"\n\n\
         import numpy as np\n",
        e.coords.join(", ")
    );
    for (n, v) in &e.constants {
        let _ = writeln!(s, "{} = {}", constant(n), d.number(*v));
    }
    if let Some(i) = &e.integral {
        let width = i
            .pieces
            .iter()
            .map(|p| p.coefficients.len())
            .max()
            .unwrap_or(1);
        let nums = |v: &[f64]| {
            v.iter()
                .map(|x| d.number(*x))
                .collect::<Vec<_>>()
                .join(", ")
        };
        let _ = writeln!(s, "\n_BREAKS = np.array([{}])", nums(&i.breaks()));
        s += "# One row per piece, padded with zeros (which leave Clenshaw's sum unchanged).\n";
        s += "_COEFFICIENTS = np.array([\n";
        for p in &i.pieces {
            let mut c = p.coefficients.clone();
            c.resize(width, 0.0);
            let _ = writeln!(s, "    [{}],", nums(&c));
        }
        s += "])\n\n";
        let _ = writeln!(
            s,
            "def _integral(s):\n    \"\"\"{q} at s: the piece by bisection, then Clenshaw's recurrence.\"\"\"\n    \
             s = np.asarray(s, dtype=float)\n    \
             k = np.clip(np.searchsorted(_BREAKS, s, side=\"right\") - 1, 0, len(_BREAKS) - 2)\n    \
             a = _BREAKS[k]\n    b = _BREAKS[k + 1]\n    t = (2.0*s - (a + b))/(b - a)\n    \
             c = _COEFFICIENTS[k]\n    b1 = np.zeros_like(t)\n    b2 = np.zeros_like(t)\n    \
             for j in range(c.shape[-1] - 1, 0, -1):\n        \
             b1, b2 = c[..., j] + 2.0*t*b1 - b2, b1\n    q = c[..., 0] + t*b1 - b2\n    \
             return np.where((s >= _BREAKS[0]) & (s <= _BREAKS[-1]), q, np.nan)\n",
            q = i.quantity
        );
    }
    let args = e.coords.join(", ");
    let _ = writeln!(
        s,
        "\ndef {id}({args}):\n    \"\"\"The background at ({args}).\"\"\""
    );
    for c in &e.coords {
        let _ = writeln!(s, "    {c} = np.asarray({c}, dtype=float)");
    }
    let _ = writeln!(s, "    zero = np.zeros(np.broadcast({args}).shape)");
    s += "    with np.errstate(all=\"ignore\"):\n";
    if e.integral.is_some() {
        let _ = writeln!(s, "        integral = _integral({})", e.coords[0]);
    }
    for (n, x) in temps {
        let _ = writeln!(s, "        {n} = {x}");
    }
    for (n, x) in scalars(e) {
        let _ = writeln!(s, "        {n} = zero + ({})", code(x));
    }
    for (n, v) in vectors(e) {
        let parts: Vec<String> = v.iter().map(|x| format!("zero + ({})", code(x))).collect();
        let _ = writeln!(s, "        {n} = ({})", parts.join(", "));
    }
    s += "    return {\"density\": density, \"pressure\": pressure, \"potential\": potential,\n";
    s += "            \"velocity\": velocity, \"gravity\": gravity, \"pressure_accel\": pressure_accel}\n";
    s
}
