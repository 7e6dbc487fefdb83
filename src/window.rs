//! Windows of states.
//!
//! `--window LO:HI` selects states by index fraction: with `n` states sorted by
//! energy, the window holds the indices `floor(LO·n) ..= ceil(HI·n) − 1`, that is
//! the half-open range `floor(LO·n) .. ceil(HI·n)`.
//! `--energy-window ELO:EHI` selects by energy density ε = (E − E_min)/(E_max − E_min)
//! instead: the states with `ELO ≤ ε ≤ EHI`.

use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};
use std::ops::Range;

/// A window given as fractions of the state index, `0 ≤ lo < hi ≤ 1`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Window {
    /// Lower index fraction.
    pub lo: f64,
    /// Upper index fraction.
    pub hi: f64,
}

/// How a window was specified: by index fraction or by energy density.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum WindowSpec {
    /// Index fractions (`--window`).
    Fraction(Window),
    /// Energy densities ε = (E − E_min)/(E_max − E_min) (`--energy-window`).
    EnergyDensity(Window),
}

impl Window {
    /// Default window of the level statistics, `0.25:0.75`.
    pub const LEVELS: Window = Window { lo: 0.25, hi: 0.75 };
    /// Default window of the matrix-element analyses, `0.4:0.6`.
    pub const MATRIX_ELEMENTS: Window = Window { lo: 0.4, hi: 0.6 };

    /// Parses `LO:HI` with `0 ≤ LO < HI ≤ 1`.
    pub fn parse(s: &str) -> Result<Window> {
        let bad = || {
            Error::usage(format!(
                "window '{s}': expected LO:HI with 0 <= LO < HI <= 1, e.g. 0.4:0.6"
            ))
        };
        let (a, b) = s.split_once(':').ok_or_else(bad)?;
        let lo: f64 = a.trim().parse().map_err(|_| bad())?;
        let hi: f64 = b.trim().parse().map_err(|_| bad())?;
        if !(lo.is_finite() && hi.is_finite() && 0.0 <= lo && lo < hi && hi <= 1.0) {
            return Err(bad());
        }
        Ok(Window { lo, hi })
    }

    /// Index range `floor(lo·n) .. ceil(hi·n)` (clamped to `0..n`).
    pub fn indices(&self, n: usize) -> Range<usize> {
        let a = ((self.lo * n as f64).floor() as usize).min(n);
        let b = ((self.hi * n as f64).ceil() as usize).min(n);
        a..b.max(a)
    }
}

impl std::fmt::Display for Window {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}:{}", self.lo, self.hi)
    }
}

impl WindowSpec {
    /// Index range of the window in an ascending spectrum `energies`.
    pub fn indices(&self, energies: &[f64]) -> Range<usize> {
        match self {
            WindowSpec::Fraction(w) => w.indices(energies.len()),
            WindowSpec::EnergyDensity(w) => {
                let n = energies.len();
                if n == 0 {
                    return 0..0;
                }
                let (emin, emax) = (energies[0], energies[n - 1]);
                let span = emax - emin;
                if span <= 0.0 {
                    return 0..n;
                }
                let lo_e = emin + w.lo * span;
                let hi_e = emin + w.hi * span;
                let a = energies.partition_point(|&e| e < lo_e);
                let b = energies.partition_point(|&e| e <= hi_e);
                a..b.max(a)
            }
        }
    }

    /// The window as printed and stored in JSON (`"0.4:0.6"` or `"e0.4:0.6"`).
    pub fn label(&self) -> String {
        match self {
            WindowSpec::Fraction(w) => format!("{w}"),
            WindowSpec::EnergyDensity(w) => format!("energy {w}"),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fraction_semantics_follow_design() {
        // DESIGN.md: indices floor(LO*n) ..= ceil(HI*n) - 1 (common practice, no source)
        let w = Window::parse("0.4:0.6").unwrap();
        assert_eq!(w.indices(10), 4..6);
        assert_eq!(w.indices(11), 4..7);
        assert_eq!(Window::parse("0:1").unwrap().indices(7), 0..7);
    }

    #[test]
    fn rejects_bad_windows() {
        for s in ["0.6:0.4", "a:b", "0.5", "-0.1:0.5", "0.2:1.5", "0.3:0.3"] {
            assert!(Window::parse(s).is_err(), "{s}");
        }
    }

    #[test]
    fn energy_density_window() {
        let e: Vec<f64> = (0..11).map(|i| i as f64).collect();
        let w = WindowSpec::EnergyDensity(Window { lo: 0.2, hi: 0.5 });
        assert_eq!(w.indices(&e), 2..6);
    }
}
