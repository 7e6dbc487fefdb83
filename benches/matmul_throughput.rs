//! Dense matrix-product throughput of faer on this machine, the yardstick that
//! `scripts/bench` divides the projection's achieved FLOP rate by.
//!
//! For a square product C = A·B of n × n real matrices the work is counted as
//! 2n³ floating-point operations (n³ multiplications and n³ additions), and the
//! rate is 2n³ / t for the best wall time t of several repetitions (after one
//! untimed warm-up product). A rectangular product C = A·B with A of shape
//! m × k and B of shape k × n counts 2·m·k·n operations.
//!
//! The products run with `Par::rayon(0)` (every rayon thread), as the projector
//! does.
//!
//! Usage (bench profile, i.e. release optimisation):
//!
//! ```text
//! cargo bench --bench matmul_throughput -- [--reps R] [--rect M,K,N]... [N ...]
//! ```
//!
//! Each measured shape prints one JSON object per line on stdout with the keys
//! `m`, `k`, `n`, `reps`, `best_seconds`, `gflops`, `threads`; a human summary
//! goes to stderr. With no size given, n = 2048 and 4096 are measured.

use faer::linalg::matmul::matmul;
use faer::{Accum, Mat, Par};
use std::hint::black_box;
use std::process::ExitCode;
use std::time::Instant;

/// One product shape: C (m × n) = A (m × k) · B (k × n).
#[derive(Debug, Clone, Copy)]
struct Shape {
    m: usize,
    k: usize,
    n: usize,
}

/// Parsed command line.
#[derive(Debug)]
struct Options {
    shapes: Vec<Shape>,
    reps: usize,
}

fn parse_usize(text: &str, what: &str) -> Result<usize, String> {
    match text.trim().parse::<usize>() {
        Ok(v) if v > 0 => Ok(v),
        _ => Err(format!("{what}: expected a positive integer, got {text:?}")),
    }
}

fn parse_args() -> Result<Options, String> {
    let mut shapes = Vec::new();
    let mut reps = 3;
    let mut args = std::env::args().skip(1);
    while let Some(arg) = args.next() {
        match arg.as_str() {
            // `cargo bench` passes `--bench` to harness-less benches.
            "--bench" => {}
            "--reps" => {
                let v = args.next().ok_or("--reps needs a value")?;
                reps = parse_usize(&v, "--reps")?;
            }
            "--rect" => {
                let v = args.next().ok_or("--rect needs M,K,N")?;
                let parts: Vec<&str> = v.split(',').collect();
                if parts.len() != 3 {
                    return Err(format!("--rect: expected M,K,N, got {v:?}"));
                }
                shapes.push(Shape {
                    m: parse_usize(parts[0], "--rect M")?,
                    k: parse_usize(parts[1], "--rect K")?,
                    n: parse_usize(parts[2], "--rect N")?,
                });
            }
            other if other.starts_with('-') => return Err(format!("unknown option {other:?}")),
            other => {
                let n = parse_usize(other, "size")?;
                shapes.push(Shape { m: n, k: n, n });
            }
        }
    }
    if shapes.is_empty() {
        shapes = [2048, 4096]
            .into_iter()
            .map(|n| Shape { m: n, k: n, n })
            .collect();
    }
    Ok(Options { shapes, reps })
}

/// Best wall time (seconds) of `reps` products of the given shape, after one warm-up.
fn best_time(shape: Shape, reps: usize) -> f64 {
    // Deterministic, well-scaled entries; the values do not affect the timing.
    let a = Mat::<f64>::from_fn(shape.m, shape.k, |i, j| {
        ((i * 7 + j * 13) % 101) as f64 / 101.0 - 0.5
    });
    let b = Mat::<f64>::from_fn(shape.k, shape.n, |i, j| {
        ((i * 11 + j * 5) % 97) as f64 / 97.0 - 0.5
    });
    let mut c = Mat::<f64>::zeros(shape.m, shape.n);
    let par = Par::rayon(0);
    matmul(c.as_mut(), Accum::Replace, a.as_ref(), b.as_ref(), 1.0, par);
    let mut best = f64::INFINITY;
    for _ in 0..reps {
        let t0 = Instant::now();
        matmul(c.as_mut(), Accum::Replace, a.as_ref(), b.as_ref(), 1.0, par);
        best = best.min(t0.elapsed().as_secs_f64());
        black_box(&c);
    }
    best
}

fn main() -> ExitCode {
    let options = match parse_args() {
        Ok(o) => o,
        Err(e) => {
            eprintln!("error: matmul_throughput: {e}");
            return ExitCode::FAILURE;
        }
    };
    let threads = rayon::current_num_threads();
    for shape in &options.shapes {
        let seconds = best_time(*shape, options.reps);
        let flops = 2.0 * shape.m as f64 * shape.k as f64 * shape.n as f64;
        let gflops = flops / seconds / 1e9;
        println!(
            "{{\"m\": {}, \"k\": {}, \"n\": {}, \"reps\": {}, \"best_seconds\": {:.6}, \"gflops\": {:.3}, \"threads\": {}}}",
            shape.m, shape.k, shape.n, options.reps, seconds, gflops, threads
        );
        eprintln!(
            "faer product {}x{} · {}x{}: best of {} = {:.4} s, {:.1} GFLOP/s ({} threads)",
            shape.m, shape.k, shape.k, shape.n, options.reps, seconds, gflops, threads
        );
    }
    ExitCode::SUCCESS
}
