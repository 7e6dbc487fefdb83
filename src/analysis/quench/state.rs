//! Initial states of a quench: the `--state` syntax, product states of spin-1/2 chains, and
//! their restriction to symmetry sectors.
//!
//! Syntax of `--state SPEC`:
//!
//! - `stored:NAME`: the state `states/NAME` stored in each sector group (for files written by
//!   `generate`, the sector component of a full-space state, not normalised per sector);
//! - `index:K`: the computational basis state `|K⟩`. When the file has sector embeddings
//!   (`embedding`, `full_dim`), `K` indexes the full space (`0 ≤ K < full_dim`) and the state is
//!   decomposed over the sectors; otherwise `K` indexes the basis of the selected sector;
//! - `product:LETTERS`: a product state of spin-1/2 sites in the full space `2^L` (bit `i` of a
//!   basis index is site `i+1`; bit 1 = up, σᶻ = +1), one letter per site from site 1 on:
//!   `u` (σᶻ = +1), `d` (σᶻ = −1), `+` (σˣ = +1), `-` (σˣ = −1), `r` (σʸ = +1), `l` (σʸ = −1);
//! - `product:AXIS±` with `AXIS` one of `x`, `y`, `z`: every site along ±AXIS (e.g. `product:x+`).
//!
//! One-site states, in the order (amplitude of ↓, amplitude of ↑):
//! `|u⟩ = (0, 1)`, `|d⟩ = (1, 0)`, `|±x⟩ = (±1, 1)/√2`, `|±y⟩ = (±i, 1)/√2`. The product
//! state is `ψ(s) = Π_i φ_i(bit_i(s))`.
//!
//! Restriction: a sector whose basis is the columns of the isometry `P` (`[full_dim, dim]`)
//! receives `c = Pᵀψ` (P is real); the sector weight is `‖c‖²`, and the weights of sectors that
//! cover the space add up to `‖ψ‖²`.

use crate::data::{c64, Csr};
use crate::error::{Error, Result};
use serde::Serialize;

/// A one-site spin-1/2 state.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Site {
    /// σᶻ = +1.
    Up,
    /// σᶻ = −1.
    Down,
    /// σˣ = +1.
    PlusX,
    /// σˣ = −1.
    MinusX,
    /// σʸ = +1.
    PlusY,
    /// σʸ = −1.
    MinusY,
}

impl Site {
    /// Amplitudes `(⟨↓|φ⟩, ⟨↑|φ⟩)`.
    pub fn amplitudes(self) -> [c64; 2] {
        let s = std::f64::consts::FRAC_1_SQRT_2;
        let r = |x: f64| c64::new(x, 0.0);
        match self {
            Site::Up => [r(0.0), r(1.0)],
            Site::Down => [r(1.0), r(0.0)],
            Site::PlusX => [r(s), r(s)],
            Site::MinusX => [r(-s), r(s)],
            Site::PlusY => [c64::new(0.0, s), r(s)],
            Site::MinusY => [c64::new(0.0, -s), r(s)],
        }
    }
}

/// A parsed `--state` value.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum StateSpec {
    /// `stored:NAME`.
    Stored {
        /// Dataset name under `states/`.
        name: String,
    },
    /// `index:K`.
    Index {
        /// Basis index.
        index: usize,
    },
    /// `product:LETTERS`: one state per site.
    Product {
        /// Site states, site 1 first.
        sites: Vec<Site>,
    },
    /// `product:AXIS±`: every site the same.
    Uniform {
        /// The state of every site.
        site: Site,
    },
}

impl StateSpec {
    /// Parses `stored:NAME`, `index:K`, `product:LETTERS` or `product:AXIS±` (module doc).
    pub fn parse(s: &str) -> Result<StateSpec> {
        /// `stored:NAME`: a dataset directly under `states/` of each sector.
        fn stored(s: &str, name: &str) -> Result<StateSpec> {
            let name = name.trim();
            if name.is_empty() || name.contains('/') {
                return Err(Error::usage(format!(
                    "state '{}': a stored state is named by its dataset under states/ of each sector (stored:NAME or states/NAME), or by --state-path NAME=PATH for a dataset elsewhere",
                    crate::error::escape(s)
                )));
            }
            Ok(StateSpec::Stored {
                name: name.to_string(),
            })
        }
        let help = "expected stored:NAME (or states/NAME), index:K, product:LETTERS (letters u d + - r l, site 1 first) or product:x+ / x- / y+ / y- / z+ / z-";
        let esc = crate::error::escape(s);
        // the dataset path of a stored state, as the README writes it
        if let Some(name) = s.trim().strip_prefix("states/") {
            return stored(s, name);
        }
        let (kind, rest) = s
            .split_once(':')
            .ok_or_else(|| Error::usage(format!("state '{esc}': {help}")))?;
        match kind.trim() {
            "stored" => stored(
                s,
                rest.trim().strip_prefix("states/").unwrap_or(rest.trim()),
            ),
            "index" => rest
                .trim()
                .parse()
                .map(|index| StateSpec::Index { index })
                .map_err(|_| Error::usage(format!("state '{s}': the index is not a whole number"))),
            "product" => {
                let r = rest.trim();
                let uniform = match r {
                    "x+" | "+x" => Some(Site::PlusX),
                    "x-" | "-x" => Some(Site::MinusX),
                    "y+" | "+y" => Some(Site::PlusY),
                    "y-" | "-y" => Some(Site::MinusY),
                    "z+" | "+z" => Some(Site::Up),
                    "z-" | "-z" => Some(Site::Down),
                    _ => None,
                };
                if let Some(site) = uniform {
                    return Ok(StateSpec::Uniform { site });
                }
                if r.is_empty() {
                    return Err(Error::usage(format!("state '{s}': no sites given; {help}")));
                }
                let sites = r
                    .chars()
                    .map(|c| match c {
                        'u' | 'U' => Ok(Site::Up),
                        'd' | 'D' => Ok(Site::Down),
                        '+' => Ok(Site::PlusX),
                        '-' => Ok(Site::MinusX),
                        'r' | 'R' => Ok(Site::PlusY),
                        'l' | 'L' => Ok(Site::MinusY),
                        _ => Err(Error::usage(format!(
                            "state '{s}': unknown site letter '{c}'; {help}"
                        ))),
                    })
                    .collect::<Result<Vec<_>>>()?;
                Ok(StateSpec::Product { sites })
            }
            _ => Err(Error::usage(format!("state '{s}': {help}"))),
        }
    }
}

/// Number of sites `L` with `2^L = full_dim`, if `full_dim` is a power of two.
pub fn sites_of_dim(full_dim: usize) -> Option<usize> {
    (full_dim.is_power_of_two() && full_dim >= 2).then(|| full_dim.trailing_zeros() as usize)
}

/// The product state `ψ(s) = Π_i φ_i(bit_i(s))` over `2^L` basis states (`L = sites.len() ≤ 30`).
pub fn product_state(sites: &[Site]) -> Result<Vec<c64>> {
    let l = sites.len();
    if l == 0 || l > 30 {
        return Err(Error::usage(format!(
            "a product state needs between 1 and 30 sites, got {l}"
        )));
    }
    let amps: Vec<[c64; 2]> = sites.iter().map(|s| s.amplitudes()).collect();
    Ok((0..1usize << l)
        .map(|s| {
            amps.iter()
                .enumerate()
                .fold(c64::new(1.0, 0.0), |acc, (i, a)| acc * a[(s >> i) & 1])
        })
        .collect())
}

/// The amplitudes `ψ(b) = Π_i φ_i(bit_i(b))` of the product state of `sites` on the
/// configurations `configs` (bit `i − 1` is site `i`): the product state's component in a
/// sector whose basis vectors are these configurations. An error when a configuration has
/// a bit set beyond the last site.
pub fn product_amplitudes(sites: &[Site], configs: &[usize]) -> Result<Vec<c64>> {
    let l = sites.len();
    if l == 0 || l > 63 {
        return Err(Error::usage(format!(
            "a product state needs between 1 and 63 sites, got {l}"
        )));
    }
    if let Some(b) = configs.iter().find(|&&b| b >> l != 0) {
        return Err(Error::other(format!(
            "configuration {b} has a spin beyond site {l} (the product state has {l} sites)"
        )));
    }
    let amps: Vec<[c64; 2]> = sites.iter().map(|s| s.amplitudes()).collect();
    Ok(configs
        .iter()
        .map(|&b| {
            amps.iter()
                .enumerate()
                .fold(c64::new(1.0, 0.0), |acc, (i, a)| acc * a[(b >> i) & 1])
        })
        .collect())
}

/// The restriction `c = Pᵀψ` of a full-space state to a sector with embedding `P`
/// (`[full_dim, dim]`, columns = sector basis in the full basis).
pub fn restrict(embedding: &Csr<f64>, psi: &[c64]) -> Result<Vec<c64>> {
    if embedding.nrows != psi.len() {
        return Err(Error::other(format!(
            "the state has {} entries but the embedding has {} rows (full dimension)",
            psi.len(),
            embedding.nrows
        )));
    }
    if embedding.indptr.len() != embedding.nrows + 1
        || embedding.indices.len() != embedding.data.len()
        || embedding.indptr.windows(2).any(|w| w[0] > w[1])
        || embedding
            .indptr
            .last()
            .is_some_and(|&l| l > embedding.data.len())
        || embedding.indices.iter().any(|&j| j >= embedding.ncols)
    {
        return Err(Error::other("the embedding CSR data are inconsistent"));
    }
    let mut c = vec![c64::new(0.0, 0.0); embedding.ncols];
    for (i, &x) in psi.iter().enumerate() {
        if x == c64::new(0.0, 0.0) {
            continue;
        }
        for p in embedding.indptr[i]..embedding.indptr[i + 1] {
            c[embedding.indices[p]] += x * embedding.data[p];
        }
    }
    Ok(c)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_specs() {
        // our own syntax (module doc; no source)
        assert_eq!(
            StateSpec::parse("stored:neel_z").unwrap(),
            StateSpec::Stored {
                name: "neel_z".into()
            }
        );
        assert_eq!(
            StateSpec::parse("index:17").unwrap(),
            StateSpec::Index { index: 17 }
        );
        assert_eq!(
            StateSpec::parse("product:x+").unwrap(),
            StateSpec::Uniform { site: Site::PlusX }
        );
        assert_eq!(
            StateSpec::parse("product:ud+").unwrap(),
            StateSpec::Product {
                sites: vec![Site::Up, Site::Down, Site::PlusX]
            }
        );
        for s in [
            "neel",
            "index:-1",
            "product:uxq",
            "stored:",
            "product:",
            "what:1",
        ] {
            assert!(StateSpec::parse(s).is_err(), "{s}");
        }
    }

    #[test]
    fn product_amplitudes_are_the_entries_of_the_full_product_state() {
        // exact identity with the full vector of product_state (common practice, no source)
        let sites = [
            Site::Up,
            Site::PlusX,
            Site::MinusY,
            Site::Down,
            Site::MinusX,
        ];
        let full = product_state(&sites).unwrap();
        let configs: Vec<usize> = vec![0, 3, 5, 17, 31, 12];
        let got = product_amplitudes(&sites, &configs).unwrap();
        for (&b, g) in configs.iter().zip(&got) {
            assert_eq!(*g, full[b], "configuration {b}");
        }
        // a spin beyond the last site is refused
        assert!(product_amplitudes(&sites, &[32]).is_err());
    }

    #[test]
    fn product_state_bits_and_norm() {
        // bit i ↔ site i+1, 1 = up (convention of the model builder); |+x⟩ = (|↑⟩+|↓⟩)/√2 (textbook)
        let psi = product_state(&[Site::Up, Site::Down, Site::Down]).unwrap();
        assert_eq!(psi.len(), 8);
        assert_eq!(psi[0b001], c64::new(1.0, 0.0));
        let norm: f64 = psi.iter().map(|x| x.norm_sqr()).sum();
        assert!((norm - 1.0).abs() < 1e-15);
        let px = product_state(&[Site::PlusY; 4]).unwrap();
        let norm: f64 = px.iter().map(|x| x.norm_sqr()).sum();
        assert!((norm - 1.0).abs() < 1e-14);
        assert!((px[0].norm_sqr() - 1.0 / 16.0).abs() < 1e-15);
        assert!(product_state(&[]).is_err());
    }

    #[test]
    fn restriction_keeps_weights() {
        // sectors that cover the space: weights add up to ‖ψ‖² (isometry; linear algebra)
        // two "parity" sectors of a 2-site space: even {|00⟩, |11⟩, (|01⟩+|10⟩)/√2}, odd {(|01⟩−|10⟩)/√2}
        let s = std::f64::consts::FRAC_1_SQRT_2;
        let even = Csr {
            nrows: 4,
            ncols: 3,
            indptr: vec![0, 1, 2, 3, 4],
            indices: vec![0, 2, 2, 1],
            data: vec![1.0, s, s, 1.0],
        };
        let odd = Csr {
            nrows: 4,
            ncols: 1,
            indptr: vec![0, 0, 1, 2, 2],
            indices: vec![0, 0],
            data: vec![s, -s],
        };
        let psi = product_state(&[Site::Up, Site::PlusY]).unwrap();
        let w: f64 = [even, odd]
            .iter()
            .map(|p| {
                restrict(p, &psi)
                    .unwrap()
                    .iter()
                    .map(|x| x.norm_sqr())
                    .sum::<f64>()
            })
            .sum();
        assert!((w - 1.0).abs() < 1e-14);
        let bad = Csr {
            nrows: 2,
            ncols: 1,
            indptr: vec![0, 1, 1],
            indices: vec![0],
            data: vec![1.0],
        };
        assert!(restrict(&bad, &psi).is_err());
    }
}
