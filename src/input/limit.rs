//! Allocations sized by a file header are checked before they are made.
//!
//! A file states the shape of each dataset in its header; nothing stops a damaged or
//! hostile file from declaring energies of length 10⁹ or a 2²⁰ × 2²⁰ matrix while storing
//! a few kilobytes. Every reader first computes the bytes a read will hold in memory from
//! the declared shape and compares them with a [`Limit`]: the `--memory` budget (default:
//! half of the machine's memory), or the machine's memory when the budget is larger. A read
//! over the limit is refused with one line naming the dataset, the declared shape, the bytes
//! needed and the limit; nothing is allocated.

use crate::error::{Error, Result};
use crate::memory::{default_budget_bytes, human_bytes, machine_bytes};
use std::path::Path;

/// The most bytes one read may hold in memory.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Limit {
    bytes: usize,
    machine: bool,
}

impl Default for Limit {
    /// The default budget ([`default_budget_bytes`]).
    fn default() -> Self {
        Limit::new(None)
    }
}

impl Limit {
    /// The limit of a memory budget of `budget` bytes (`None`: the default budget), never
    /// more than the machine's memory.
    pub fn new(budget: Option<usize>) -> Limit {
        let budget = budget.unwrap_or_else(default_budget_bytes);
        match machine_bytes() {
            Some(m) if m < budget => Limit {
                bytes: m,
                machine: true,
            },
            _ => Limit {
                bytes: budget,
                machine: false,
            },
        }
    }

    /// The limit in bytes.
    pub fn bytes(&self) -> usize {
        self.bytes
    }

    /// True when `need` bytes fit.
    pub fn fits(&self, need: f64) -> bool {
        need <= self.bytes as f64
    }

    /// An error unless `need` bytes (computed from the declared `shape` of `dataset`,
    /// elements `element`) fit; `what` says what they are for ("to read and sort").
    pub fn check(
        &self,
        file: &Path,
        dataset: &str,
        shape: &[usize],
        element: &str,
        need: f64,
        what: &str,
    ) -> Result<()> {
        if self.fits(need) {
            return Ok(());
        }
        let limit = if self.machine {
            format!("the machine's memory of {}", human_bytes(self.bytes as f64))
        } else {
            format!(
                "the memory budget of {} (--memory)",
                human_bytes(self.bytes as f64)
            )
        };
        Err(Error::dataset(
            file,
            dataset,
            format!(
                "declared shape {} of {element} needs {} in memory {what}, more than {limit}",
                super::h5::format_shape(shape),
                human_bytes(need),
            ),
        ))
    }
}

/// Number of elements of `shape` as a float (never overflows).
pub fn elements(shape: &[usize]) -> f64 {
    shape.iter().map(|&x| x as f64).product()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn over_the_limit_is_one_line_naming_shape_bytes_and_budget() {
        // our own wording (common practice, no source); 10⁹ float64 = 8e9 bytes = 7.45 GiB
        let l = Limit {
            bytes: 1 << 30,
            machine: false,
        };
        assert!(l.fits((1u64 << 30) as f64) && !l.fits((1u64 << 30) as f64 + 1.0));
        let e = l
            .check(
                Path::new("f.h5"),
                "/energies",
                &[1_000_000_000],
                "float64",
                8e9,
                "to read",
            )
            .unwrap_err()
            .to_string();
        assert_eq!(
            e,
            "f.h5: /energies: declared shape [1000000000] of float64 needs 7.45 GiB in memory to read, more than the memory budget of 1.00 GiB (--memory)"
        );
        assert_eq!(
            elements(&[usize::MAX, usize::MAX]),
            (usize::MAX as f64).powi(2)
        );
    }
}
