//! Evaluator benchmark (`cargo bench --bench evaluator`): the vertically
//! isothermal disk law set at 10^7 points on one thread, the block kernel
//! against the same formulas written by hand in Rust, and against the stack
//! machine that was the evaluator before. It prints each figure and the
//! ratios measured in this run; the target is kernel ≤ 1.5 × hand-written,
//! judged against a loop that does the same arithmetic (half powers through
//! square roots, as the kernel takes them), and shown against one written
//! with `powf` too.
//! Before timing it asserts that the kernel and the hand-written loop agree
//! to round-off (relative 1e-13) and the kernel and the stack machine to the
//! bit, so the three cannot silently measure different work.
//!
//! The law set is that of a vertically isothermal disk with power-law
//! density and temperature, Nelson, Gressel & Umurhan 2013, MNRAS 435, 2610
//! (their equations for ρ(R, z) and Ω(R, z)), written from memory:
//!
//! ```text
//! c2   = cs2_0*(R/R0)^q
//! rho  = rho0*(R/R0)^p*exp(G*M/c2*(1/sqrt(R^2 + z^2) - 1/R))
//! P    = rho*c2
//! vphi = sqrt(G*M/R)*sqrt((p + q)*c2*R/(G*M) + (1 + q) - q*R/sqrt(R^2 + z^2))
//! Phi  = -G*M/sqrt(R^2 + z^2)
//! ```
//!
//! with G = M = R0 = rho0 = 1, p = -1.5, q = -0.5, h0 = 0.05 and
//! cs2_0 = h0^2*G*M/R0; each output is compiled with c2 (and rho) written
//! out as formulas, so the kernel has to find the sharing itself. The
//! hand-written loop shares what a person would (R/R0, sqrt(R^2 + z^2),
//! G*M, c2, rho) and reads the parameters at run time, as a program
//! reading them from a profile would.
#![deny(clippy::float_cmp)]

use std::hint::black_box;
use std::time::{Duration, Instant};
use stillpoint::formula::{parse, Expr, Kernel, StackProgram, Workspace};

const N: usize = 10_000_000;
const REPS: usize = 7;
const STACK_REPS: usize = 3;

/// The disk's parameters, passed to the hand-written loop at run time.
#[derive(Clone, Copy)]
struct Disk {
    g: f64,
    m: f64,
    r0: f64,
    rho0: f64,
    p: f64,
    q: f64,
    cs2_0: f64,
    /// Softening length of the Plummer law set.
    eps: f64,
}

impl Disk {
    fn new() -> Disk {
        let (g, m, r0, h0) = (1.0, 1.0, 1.0, 0.05f64);
        Disk {
            g,
            m,
            r0,
            rho0: 1.0,
            p: -1.5,
            q: -0.5,
            cs2_0: h0.powi(2) * g * m / r0,
            eps: 0.1,
        }
    }
    fn lookup(&self, n: &str) -> Option<f64> {
        Some(match n {
            "G" => self.g,
            "M" => self.m,
            "R0" => self.r0,
            "rho0" => self.rho0,
            "p" => self.p,
            "q" => self.q,
            "cs2_0" => self.cs2_0,
            "eps" => self.eps,
            _ => return None,
        })
    }
}

/// The five outputs as formulas, c2 and rho substituted.
fn law_set() -> Vec<(&'static str, Expr)> {
    let c2 = "cs2_0*(R/R0)^q";
    let rho = format!("rho0*(R/R0)^p*exp(G*M/({c2})*(1/sqrt(R^2 + z^2) - 1/R))");
    let vphi = format!("sqrt(G*M/R)*sqrt((p + q)*({c2})*R/(G*M) + (1 + q) - q*R/sqrt(R^2 + z^2))");
    let f = |s: &str| parse(s).expect("the law set parses");
    vec![
        ("c2", f(c2)),
        ("rho", f(&rho)),
        ("P", f(&format!("({rho})*({c2})"))),
        ("vphi", f(&vphi)),
        ("Phi", f("-G*M/sqrt(R^2 + z^2)")),
    ]
}

/// The same formulas by hand: one straightforward loop.
fn hand_written(d: &Disk, r: &[f64], z: &[f64], out: &mut [Vec<f64>]) {
    let [c2o, rhoo, po, vo, phio] = out else {
        panic!("five outputs")
    };
    let gm = d.g * d.m;
    for i in 0..r.len() {
        let (r, z) = (r[i], z[i]);
        let x = r / d.r0;
        let s = (r * r + z * z).sqrt();
        let c2 = d.cs2_0 * x.powf(d.q);
        let rho = d.rho0 * x.powf(d.p) * (gm / c2 * (1.0 / s - 1.0 / r)).exp();
        c2o[i] = c2;
        rhoo[i] = rho;
        po[i] = rho * c2;
        vo[i] = (gm / r).sqrt() * ((d.p + d.q) * c2 * r / gm + (1.0 + d.q) - d.q * r / s).sqrt();
        phio[i] = -gm / s;
    }
}

/// The same formulas by hand as a person who knows p = −1.5 and q = −0.5
/// writes them: half powers through one square root, as the kernel takes
/// them (`pow_f64`: a non-integer multiple of ¼ is roots and an integer
/// power), so that both do the same arithmetic.
fn hand_written_roots(d: &Disk, r: &[f64], z: &[f64], out: &mut [Vec<f64>]) {
    let [c2o, rhoo, po, vo, phio] = out else {
        panic!("five outputs")
    };
    let gm = d.g * d.m;
    for i in 0..r.len() {
        let (r, z) = (r[i], z[i]);
        let x = r / d.r0;
        let sx = x.sqrt();
        let s = (r * r + z * z).sqrt();
        let c2 = d.cs2_0 * (1.0 / sx);
        let rho = d.rho0 * (1.0 / (sx * sx * sx)) * (gm / c2 * (1.0 / s - 1.0 / r)).exp();
        c2o[i] = c2;
        rhoo[i] = rho;
        po[i] = rho * c2;
        vo[i] = (gm / r).sqrt() * ((d.p + d.q) * c2 * r / gm + (1.0 + d.q) - d.q * r / s).sqrt();
        phio[i] = -gm / s;
    }
}

fn kernel_run(k: &Kernel, ws: &mut Workspace, r: &[f64], z: &[f64], out: &mut [Vec<f64>]) {
    let mut slices: Vec<&mut [f64]> = out.iter_mut().map(|o| &mut o[..]).collect();
    k.run(&[r, z], &mut slices, ws);
}

fn stack_run(progs: &[StackProgram], r: &[f64], z: &[f64], out: &mut [Vec<f64>]) {
    for (p, o) in progs.iter().zip(out.iter_mut()) {
        for (i, o) in o.iter_mut().enumerate() {
            *o = p.eval(&[r[i], z[i]]);
        }
    }
}

/// Points spread over R in [0.5, 2], z in [-0.2, 0.2] (SplitMix64 draws).
fn points() -> (Vec<f64>, Vec<f64>) {
    let mut state = 0x2545_f491_4f6c_dd1d_u64;
    let mut uniform = move || {
        state = state.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut x = state;
        x = (x ^ (x >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        x = (x ^ (x >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        ((x ^ (x >> 31)) >> 11) as f64 / (1u64 << 53) as f64
    };
    (0..N)
        .map(|_| (0.5 + 1.5 * uniform(), 0.4 * uniform() - 0.2))
        .unzip()
}

fn time(reps: usize, mut f: impl FnMut()) -> Vec<Duration> {
    (0..reps)
        .map(|_| {
            let t = Instant::now();
            f();
            t.elapsed()
        })
        .collect()
}

fn min_median(mut t: Vec<Duration>) -> (f64, f64) {
    t.sort();
    (t[0].as_secs_f64(), t[t.len() / 2].as_secs_f64())
}

fn machine() -> String {
    let cpu = std::fs::read_to_string("/proc/cpuinfo")
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with("model name"))
                .and_then(|l| l.split(':').nth(1))
                .map(|m| m.trim().to_string())
        })
        .unwrap_or_else(|| "unknown CPU".into());
    let cores = std::thread::available_parallelism().map_or(0, |n| n.get());
    format!("{cpu}, {cores} cores available, run on 1 thread")
}

/// A loop over the points computing every output.
type ByHand<'a> = &'a dyn Fn(&[f64], &[f64], &mut [Vec<f64>]);

/// A law set to time: its formulas, the same by hand, and whether the
/// stack machine is timed on it too.
struct Case<'a> {
    title: &'a str,
    laws: Vec<(&'static str, Expr)>,
    hand: ByHand<'a>,
    stack: bool,
}

/// Check agreement, then time kernel and hand-written runs interleaved
/// (and the stack machine), and print the figures; returns the median ratio.
fn measure(case: &Case, disk: &Disk, r: &[f64], z: &[f64]) -> f64 {
    let lookup = |n: &str| disk.lookup(n);
    let named: Vec<(&str, &Expr)> = case.laws.iter().map(|(n, e)| (*n, e)).collect();
    let kernel = Kernel::compile(&named, &["R", "z"], &lookup).expect("compiles");
    let stack: Vec<StackProgram> = case
        .laws
        .iter()
        .map(|(_, e)| StackProgram::compile(e, &["R", "z"], &lookup).expect("compiles"))
        .collect();
    let m = case.laws.len();
    let mut ws = kernel.workspace();
    let mut out_k = vec![vec![0.0; N]; m];
    let mut out_h = vec![vec![0.0; N]; m];
    let mut out_s = vec![vec![0.0; if case.stack { N } else { 0 }]; m];

    // Agreement first (this also touches every output page before timing).
    kernel_run(&kernel, &mut ws, r, z, &mut out_k);
    (case.hand)(r, z, &mut out_h);
    stack_run(&stack, r, z, &mut out_s);
    let mut worst = 0.0f64;
    for (j, (name, _)) in case.laws.iter().enumerate() {
        for i in 0..N {
            let (a, b) = (out_k[j][i], out_h[j][i]);
            let rel = (a - b).abs() / a.abs().max(b.abs());
            assert!(
                rel <= 1e-13,
                "{name} at point {i}: kernel {a:e}, hand-written {b:e}"
            );
            if let Some(s) = out_s[j].get(i) {
                assert!(
                    a.to_bits() == s.to_bits(),
                    "{name} at point {i}: kernel {a:e}, stack machine {s:e}"
                );
            }
            worst = worst.max(rel);
        }
    }

    let (mut tk, mut th) = (Vec::new(), Vec::new());
    for _ in 0..REPS {
        tk.extend(time(1, || kernel_run(&kernel, &mut ws, r, z, &mut out_k)));
        th.extend(time(1, || (case.hand)(r, z, &mut out_h)));
    }
    let ts = time(if case.stack { STACK_REPS } else { 0 }, || {
        stack_run(&stack, r, z, &mut out_s)
    });
    // The kernel's scalar path (one point at a time), into the stack
    // machine's buffers.
    let tp = time(if case.stack { STACK_REPS } else { 0 }, || {
        let mut p = vec![0.0; m];
        for i in 0..out_s[0].len() {
            kernel.eval(&[r[i], z[i]], &mut p, &mut ws);
            for (o, v) in out_s.iter_mut().zip(&p) {
                o[i] = *v;
            }
        }
    });
    black_box((&out_k, &out_h, &out_s));

    let ns = |t: f64| t * 1e9 / N as f64;
    let ((kmin, kmed), (hmin, hmed)) = (min_median(tk), min_median(th));
    println!("\n{}: {m} outputs, 10^7 points", case.title);
    println!(
        "  kernel ({} instructions, {} registers), {REPS} runs: min {kmin:.3} s, median {kmed:.3} s ({:.1} ns/point)",
        kernel.len(),
        kernel.registers(),
        ns(kmed)
    );
    println!(
        "  hand-written Rust loop, {REPS} runs: min {hmin:.3} s, median {hmed:.3} s ({:.1} ns/point)",
        ns(hmed)
    );
    println!(
        "  kernel / hand-written: {:.2} (median), {:.2} (min)",
        kmed / hmed,
        kmin / hmin
    );
    if case.stack {
        let (smin, smed) = min_median(ts);
        println!(
            "  stack machine (the previous Program), {STACK_REPS} runs: min {smin:.3} s, median {smed:.3} s ({:.1} ns/point)",
            ns(smed)
        );
        println!("  stack machine / kernel: {:.1} (median)", smed / kmed);
        let (pmin, pmed) = min_median(tp);
        println!(
            "  kernel, scalar path (one point at a time), {STACK_REPS} runs: min {pmin:.3} s, median {pmed:.3} s ({:.1} ns/point)",
            ns(pmed)
        );
    }
    println!(
        "  agreement: kernel vs hand-written max relative difference {worst:.1e} (limit 1e-13){}",
        if case.stack {
            "; kernel and stack machine identical to the bit"
        } else {
            ""
        }
    );
    kmed / hmed
}

/// Point mass with Plummer softening: potential and the two components of
/// its gravity (additions, products, one square root and reciprocals only,
/// so dispatch and memory traffic, not library calls, dominate).
fn plummer_set() -> Vec<(&'static str, Expr)> {
    let s = "sqrt(R^2 + z^2 + eps^2)";
    let f = |t: String| parse(&t).expect("the law set parses");
    vec![
        ("Phi", f(format!("-G*M/{s}"))),
        ("gR", f(format!("-G*M*R/{s}^3"))),
        ("gz", f(format!("-G*M*z/{s}^3"))),
    ]
}

fn plummer_by_hand(d: &Disk, r: &[f64], z: &[f64], out: &mut [Vec<f64>]) {
    let [phi, gr, gz] = out else {
        panic!("three outputs")
    };
    let (gm, e2) = (d.g * d.m, d.eps * d.eps);
    for i in 0..r.len() {
        let (r, z) = (r[i], z[i]);
        let inv = 1.0 / (r * r + z * z + e2).sqrt();
        let inv3 = inv * inv * inv;
        phi[i] = -gm * inv;
        gr[i] = -gm * r * inv3;
        gz[i] = -gm * z * inv3;
    }
}

fn main() {
    let disk = Disk::new();
    if std::env::args().any(|a| a == "--show") {
        let laws = [law_set(), plummer_set()].concat();
        let named: Vec<(&str, &Expr)> = laws.iter().map(|(n, e)| (*n, e)).collect();
        let k = Kernel::compile(&named, &["R", "z"], &|n| disk.lookup(n)).expect("compiles");
        print!("{k}");
        return;
    }
    // `--no-stack` leaves the (slow) stack machine out, for tuning runs.
    let with_stack = !std::env::args().any(|a| a == "--no-stack");
    let (r, z) = points();
    let params = black_box(disk);
    println!("evaluator benchmark (one thread)");
    println!("machine: {}", machine());
    let against_powf = measure(
        &Case {
            title: "vertically isothermal disk (c2, rho, P, vphi, Phi), by hand with powf",
            laws: law_set(),
            hand: &|r, z, out| hand_written(&params, r, z, out),
            stack: with_stack,
        },
        &disk,
        &r,
        &z,
    );
    let ratio = measure(
        &Case {
            title: "vertically isothermal disk, by hand with the half powers as square roots",
            laws: law_set(),
            hand: &|r, z, out| hand_written_roots(&params, r, z, out),
            stack: false,
        },
        &disk,
        &r,
        &z,
    );
    measure(
        &Case {
            title: "Plummer point mass (Phi, gR, gz), arithmetic only, no target",
            laws: plummer_set(),
            hand: &|r, z, out| plummer_by_hand(&params, r, z, out),
            stack: false,
        },
        &disk,
        &r,
        &z,
    );
    println!(
        "\ntarget, disk: kernel <= 1.5 x hand-written with the same arithmetic (median): {:.2}, {}",
        ratio,
        if ratio <= 1.5 { "met" } else { "NOT met" }
    );
    println!(
        "(against the loop written with powf, which the kernel's square roots outpace: {against_powf:.2})"
    );
}
