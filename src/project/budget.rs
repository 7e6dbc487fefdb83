//! The working-memory budget of every pass over the eigenvectors, and the block widths it
//! allows.
//!
//! A pass holds column blocks of `b` eigenvectors of dimension `dim`. For `q` operators
//! whose products `A·V_J` are kept and elements of `s` bytes, the working set is about
//!
//! ```text
//! bytes(b) = (4 + q)·dim·b·s + q·b²·s
//! ```
//!
//! (two eigenvector blocks in use, up to two more in the reader that fetches ahead, one
//! product buffer per operator, the `b × b` result blocks). [`block_size`] returns the
//! largest `b` with `bytes(b) ≤ budget`. The budget also carries the parallelism of the
//! dense products ([`Budget::par`]), so that every pass is told both explicitly.

use crate::error::{Error, Result};
use faer::Par;

pub use crate::memory::{
    default_budget_bytes, human_bytes, DEFAULT_MEMORY_FRACTION, FALLBACK_BUDGET_BYTES,
};

/// Memory and parallelism of a pass over the eigenvectors.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Budget {
    /// Working-memory budget in bytes (eigenvector blocks, products, result blocks).
    pub bytes: usize,
    /// Fixed number of columns per block, overriding the budget (at least 1; tests).
    pub block: Option<usize>,
    /// Parallelism of the dense products (faer); `Par::rayon(0)` uses every thread of the
    /// current rayon pool.
    pub par: Par,
}

impl Default for Budget {
    /// Budget = [`DEFAULT_MEMORY_FRACTION`] of the total memory, automatic block size,
    /// every thread of the rayon pool.
    fn default() -> Self {
        Budget::new(default_budget_bytes())
    }
}

impl Budget {
    /// A budget of `bytes`, automatic block size, every thread of the rayon pool.
    pub fn new(bytes: usize) -> Self {
        Budget {
            bytes,
            block: None,
            par: Par::rayon(0),
        }
    }

    /// The budget of an optional `--memory SIZE` string (see [`parse_memory`]); the
    /// default budget without one.
    pub fn from_arg(memory: Option<&str>) -> Result<Self> {
        Ok(match memory {
            Some(s) => Budget::new(parse_memory(s)?),
            None => Budget::default(),
        })
    }

    /// The same budget with a share `fraction` of the bytes (for a pass that runs while
    /// something else holds the rest).
    pub fn share(&self, fraction: f64) -> Self {
        Budget {
            bytes: (self.bytes as f64 * fraction) as usize,
            ..*self
        }
    }
}

/// Parses a memory size: a number with an optional binary suffix `K`, `M`, `G`, `T`
/// (powers of 1024, an optional trailing `B` or `iB` accepted), e.g. `6G`, `512M`,
/// `1.5GiB`, `1000000`.
pub fn parse_memory(s: &str) -> Result<usize> {
    let bad = || {
        Error::usage(format!(
            "memory size '{s}': expected a number with an optional K, M, G or T suffix, e.g. 6G"
        ))
    };
    let t = s.trim();
    let upper = t.to_ascii_uppercase();
    let stripped = upper
        .strip_suffix("IB")
        .or_else(|| upper.strip_suffix('B'))
        .unwrap_or(&upper);
    let (num, mult) = match stripped.chars().last() {
        Some('K') => (&stripped[..stripped.len() - 1], 1u64 << 10),
        Some('M') => (&stripped[..stripped.len() - 1], 1 << 20),
        Some('G') => (&stripped[..stripped.len() - 1], 1 << 30),
        Some('T') => (&stripped[..stripped.len() - 1], 1 << 40),
        _ => (stripped, 1),
    };
    let x: f64 = num.trim().parse().map_err(|_| bad())?;
    if !x.is_finite() || x <= 0.0 {
        return Err(bad());
    }
    let bytes = x * mult as f64;
    if bytes < 1.0 || bytes > usize::MAX as f64 {
        return Err(bad());
    }
    Ok(bytes as usize)
}

/// Block size (columns per block) for a window of `w` states, `q` operators,
/// dimension `dim` and element size `elem` bytes: the largest `b ≤ w` with
/// `(4 + q)·dim·b·elem + q·b²·elem ≤ budget` (at least 1).
pub fn block_size(w: usize, q: usize, dim: usize, elem: usize, budget: &Budget) -> usize {
    if let Some(b) = budget.block {
        return b.clamp(1, w.max(1));
    }
    let fits = |b: usize| {
        let b = b as f64;
        let bytes =
            (4.0 + q as f64) * dim as f64 * b * elem as f64 + q as f64 * b * b * elem as f64;
        bytes <= budget.bytes as f64
    };
    if fits(w) {
        return w.max(1);
    }
    // bisection on the monotone condition
    let (mut lo, mut hi) = (1usize, w.max(1));
    while hi - lo > 1 {
        let mid = lo + (hi - lo) / 2;
        if fits(mid) {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    lo
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn memory_sizes() {
        // binary suffixes (common practice, no source)
        assert_eq!(parse_memory("6G").unwrap(), 6 << 30);
        assert_eq!(parse_memory("512m").unwrap(), 512 << 20);
        assert_eq!(parse_memory("1.5GiB").unwrap(), 3 << 29);
        assert_eq!(parse_memory("1000").unwrap(), 1000);
        for s in ["", "G", "-1G", "abc", "0"] {
            assert!(parse_memory(s).is_err(), "{s}");
        }
    }

    #[test]
    fn block_size_respects_budget() {
        // (4 + q)·dim·b·s + q·b²·s ≤ budget (the documented working-set model; no source)
        let budget = Budget::new(1 << 20);
        let b = block_size(1000, 2, 1000, 8, &budget);
        let used = |b: usize| (6 * 1000 * b * 8 + 2 * b * b * 8) as f64;
        assert!(
            used(b) <= (1 << 20) as f64 && used(b + 1) > (1 << 20) as f64,
            "b = {b}"
        );
        assert_eq!(block_size(10, 1, 10, 8, &budget), 10);
        let fixed = Budget {
            block: Some(3),
            ..Budget::new(1)
        };
        assert_eq!(block_size(10, 1, 10, 8, &fixed), 3);
    }
}
