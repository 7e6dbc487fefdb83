//! Time grids of the quench traces: `lin:T0:T1:N` (equally spaced) and `log:T0:T1:N`
//! (logarithmically spaced, `t_k = T0 (T1/T0)^{k/(N−1)}`).

use crate::error::{Error, Result};
use serde::Serialize;

/// Default time grid, `lin:0:100:501` (times in units of ħ over the energy unit of the file).
pub const DEFAULT_TIMES: &str = "lin:0:100:501";

/// A grid of times, linear or logarithmic.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum TimeGrid {
    /// `n` points `t0 + k (t1 − t0)/(n − 1)`.
    Lin {
        /// First time.
        t0: f64,
        /// Last time.
        t1: f64,
        /// Number of points.
        n: usize,
    },
    /// `n` points `t0 (t1/t0)^{k/(n−1)}` (requires `0 < t0 < t1`).
    Log {
        /// First time.
        t0: f64,
        /// Last time.
        t1: f64,
        /// Number of points.
        n: usize,
    },
}

impl TimeGrid {
    /// Parses `lin:T0:T1:N` or `log:T0:T1:N` (`T0 < T1`, `N ≥ 2`; for `log`, `T0 > 0`).
    pub fn parse(s: &str) -> Result<TimeGrid> {
        let bad = |why: &str| {
            Error::usage(format!(
                "times '{s}': {why} (expected lin:T0:T1:N or log:T0:T1:N, e.g. {DEFAULT_TIMES} or log:0.01:1000:200)"
            ))
        };
        let parts: Vec<&str> = s.split(':').map(str::trim).collect();
        if parts.len() != 4 {
            return Err(bad("four fields separated by ':' needed"));
        }
        let t0: f64 = parts[1].parse().map_err(|_| bad("T0 is not a number"))?;
        let t1: f64 = parts[2].parse().map_err(|_| bad("T1 is not a number"))?;
        let n: usize = parts[3]
            .parse()
            .map_err(|_| bad("N is not a whole number"))?;
        if !(t0.is_finite() && t1.is_finite() && t0 < t1) {
            return Err(bad("need finite T0 < T1"));
        }
        if n < 2 {
            return Err(bad("need N >= 2"));
        }
        match parts[0] {
            "lin" => Ok(TimeGrid::Lin { t0, t1, n }),
            "log" if t0 > 0.0 => Ok(TimeGrid::Log { t0, t1, n }),
            "log" => Err(bad("a logarithmic grid needs T0 > 0")),
            _ => Err(bad("the kind must be 'lin' or 'log'")),
        }
    }

    /// The grid points.
    pub fn points(&self) -> Vec<f64> {
        match *self {
            TimeGrid::Lin { t0, t1, n } => (0..n)
                .map(|k| t0 + (t1 - t0) * k as f64 / (n - 1) as f64)
                .collect(),
            TimeGrid::Log { t0, t1, n } => {
                let r = (t1 / t0).ln();
                (0..n)
                    .map(|k| t0 * (r * k as f64 / (n - 1) as f64).exp())
                    .collect()
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn time_grids() {
        // definition of the grids (common practice, no source)
        let g = TimeGrid::parse("lin:0:10:11").unwrap();
        assert_eq!(g.points()[3], 3.0);
        let g = TimeGrid::parse("log:0.01:100:5").unwrap();
        let p = g.points();
        assert!((p[2] - 1.0).abs() < 1e-12 && (p[4] - 100.0).abs() < 1e-9);
        for s in [
            "lin:1:0:5",
            "log:0:1:5",
            "lin:0:1:1",
            "cos:0:1:5",
            "lin:0:1",
            "lin:a:1:3",
        ] {
            assert!(TimeGrid::parse(s).is_err(), "{s}");
        }
        assert!(TimeGrid::parse(DEFAULT_TIMES).is_ok());
    }
}
