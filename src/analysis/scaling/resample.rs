//! Bootstrap errors: the nonparametric bootstrap over independent samples and the
//! moving-block bootstrap over correlated sequences (see the module docs of
//! [`crate::analysis::scaling`]).

use rand::Rng;

/// Resamples of every bootstrap in the tool: 200.
pub const RESAMPLES: usize = 200;

/// Seed of the bootstrap generator when the caller does not give one (fixed, so that
/// reports are reproducible run to run).
pub const DEFAULT_SEED: u64 = 0x5EED_2014;

/// Nonparametric bootstrap of `statistic` over independent `samples`.
///
/// Returns `(statistic(samples), σ*)` where `σ*` is the standard deviation (denominator
/// `B − 1`) of the statistic over `B = resamples` resamples drawn with replacement from a
/// ChaCha8 generator seeded with `seed` (module docs). With fewer than two samples or
/// fewer than two resamples the error is NaN. Use [`RESAMPLES`] and
/// [`DEFAULT_SEED`] unless there is a reason not to.
pub fn bootstrap(
    samples: &[f64],
    statistic: impl Fn(&[f64]) -> f64,
    resamples: usize,
    seed: u64,
) -> (f64, f64) {
    // the moving-block bootstrap with blocks of one value draws the same starts
    block_bootstrap(samples, statistic, 1, resamples, seed)
}

/// Block length used by [`block_bootstrap`] when the caller has no better choice:
/// `max(2, ⌈n^(1/3)⌉)`, capped at `n` (module docs).
pub fn default_block_length(n: usize) -> usize {
    let l = (n as f64).cbrt().ceil() as usize;
    l.max(2).min(n.max(1))
}

/// Moving-block bootstrap of `statistic` over a correlated sequence.
///
/// Each resample concatenates `⌈n/ℓ⌉` blocks `samples[s .. s+ℓ]` with `s` uniform in
/// `0 ..= n − ℓ` and truncates to `n` values (Künsch 1989). Returns
/// `(statistic(samples), σ*)` as [`bootstrap`]; `block_len` is clamped to `1 ..= n`
/// (`ℓ = 1` is the ordinary bootstrap).
pub fn block_bootstrap(
    samples: &[f64],
    statistic: impl Fn(&[f64]) -> f64,
    block_len: usize,
    resamples: usize,
    seed: u64,
) -> (f64, f64) {
    let estimate = statistic(samples);
    let n = samples.len();
    if n < 2 || resamples < 2 {
        return (estimate, f64::NAN);
    }
    let l = block_len.clamp(1, n);
    let starts = n - l + 1;
    let mut rng = crate::model::rmt::rng(seed);
    let mut buf = Vec::with_capacity(n + l);
    let stats: Vec<f64> = (0..resamples)
        .map(|_| {
            buf.clear();
            while buf.len() < n {
                let s = rng.random_range(0..starts);
                buf.extend_from_slice(&samples[s..s + l]);
            }
            buf.truncate(n);
            statistic(&buf)
        })
        .collect();
    (estimate, sample_std(&stats))
}

/// Arithmetic mean (NaN for an empty slice); a convenient bootstrap statistic.
pub fn mean(x: &[f64]) -> f64 {
    x.iter().sum::<f64>() / x.len() as f64
}

fn sample_std(x: &[f64]) -> f64 {
    let m = mean(x);
    let ss: f64 = x.iter().map(|v| (v - m).powi(2)).sum();
    (ss / (x.len() as f64 - 1.0)).sqrt()
}
