//! The machine's memory and the default budget: shared by the readers (which refuse
//! allocations sized by a file header before making them) and the passes over the
//! eigenvectors ([`crate::project::Budget`]).

/// Fraction of the machine's total memory used as the default budget.
pub const DEFAULT_MEMORY_FRACTION: f64 = 0.5;

/// Budget used when `/proc/meminfo` cannot be read: 4 GiB.
pub const FALLBACK_BUDGET_BYTES: usize = 4 << 30;

/// Total memory of the machine (`MemTotal` of `/proc/meminfo`), when it can be read.
pub fn machine_bytes() -> Option<usize> {
    let s = std::fs::read_to_string("/proc/meminfo").ok()?;
    let kb = s
        .lines()
        .find(|l| l.starts_with("MemTotal:"))?
        .split_whitespace()
        .nth(1)?
        .parse::<f64>()
        .ok()?;
    Some((kb * 1024.0) as usize)
}

/// Default budget: `DEFAULT_MEMORY_FRACTION × MemTotal`, or [`FALLBACK_BUDGET_BYTES`] when
/// the machine's memory cannot be read.
pub fn default_budget_bytes() -> usize {
    machine_bytes()
        .map(|b| (b as f64 * DEFAULT_MEMORY_FRACTION) as usize)
        .unwrap_or(FALLBACK_BUDGET_BYTES)
}

/// `"1.50 GiB"`-style rendering of a byte count.
pub fn human_bytes(b: f64) -> String {
    const UNITS: [&str; 7] = ["B", "KiB", "MiB", "GiB", "TiB", "PiB", "EiB"];
    let mut x = b;
    let mut u = 0;
    while x >= 1024.0 && u + 1 < UNITS.len() {
        x /= 1024.0;
        u += 1;
    }
    format!("{x:.2} {}", UNITS[u])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn byte_rendering_uses_binary_units() {
        // binary prefixes (IEC 80000-13), common practice
        assert_eq!(human_bytes(1536.0), "1.50 KiB");
        assert_eq!(human_bytes(8e9), "7.45 GiB");
        assert_eq!(human_bytes(2f64.powi(63)), "8.00 EiB");
    }
}
