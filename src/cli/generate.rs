//! `eigentherm generate`: builds and diagonalises a reference model and writes its
//! eigenbasis in our layout (see [`crate::model`] for the models, sectors, observables and
//! states, and [`crate::model::writer`] for the file).

use crate::error::{Error, Result};
use crate::model::chain::build_chain_timed;
use crate::model::{
    build_random, write_file, Boundary, ChainModel, ChainSpec, RandomEnsemble, RandomSpec,
    Reflection, SectorData,
};
use std::path::PathBuf;
use std::time::{Duration, Instant};

/// Model to generate.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum ModelKind {
    /// H = J Σ σᶻσᶻ + g Σ σˣ + h Σ σᶻ (non-integrable).
    MixedFieldIsing,
    /// H = J Σ σᶻσᶻ + g Σ σˣ (integrable, free fermions).
    TransverseFieldIsing,
    /// H = J Σ (σˣσˣ + σʸσʸ + Δ σᶻσᶻ) + J₂ (same on next-nearest neighbours).
    Xxz,
    /// H = h Σ σᶻ.
    FreeSpins,
    /// Gaussian orthogonal ensemble.
    Goe,
    /// Gaussian unitary ensemble.
    Gue,
    /// Uncorrelated (Poisson) levels.
    Poisson,
}

/// Boundary conditions of a chain.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum BoundaryArg {
    /// Open chain.
    Open,
    /// Periodic chain.
    Periodic,
}

/// Treatment of the reflection symmetry i → L+1−i.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum ReflectionArg {
    /// Two sectors `even` and `odd`.
    Resolve,
    /// One sector, the full space.
    Ignore,
    /// One sector, with an extra field `--break-field` on site 1.
    Break,
}

/// Options of `eigentherm generate`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Model to build.
    #[arg(long, value_enum)]
    pub model: ModelKind,
    /// Number of sites L (spin chains).
    #[arg(long, value_name = "L")]
    pub sites: Option<usize>,
    /// Boundary conditions (spin chains).
    #[arg(long, value_enum, default_value = "open")]
    pub boundary: BoundaryArg,
    /// Reflection symmetry (spin chains).
    #[arg(long, value_enum, default_value = "resolve")]
    pub reflection: ReflectionArg,
    /// Field on site 1 that breaks the reflection symmetry (with `--reflection break`).
    #[arg(long, value_name = "X", default_value_t = 0.1)]
    pub break_field: f64,
    /// Nearest-neighbour coupling J.
    #[arg(long, default_value_t = 1.0)]
    pub j: f64,
    /// Transverse field g (Ising models).
    #[arg(long, default_value_t = 0.9045)]
    pub g: f64,
    /// Longitudinal field h (mixed-field Ising, free spins).
    #[arg(long, default_value_t = 0.8090)]
    pub h: f64,
    /// Anisotropy Δ (XXZ).
    #[arg(long, default_value_t = 0.5)]
    pub delta: f64,
    /// Next-nearest-neighbour coupling J₂ (XXZ).
    #[arg(long, default_value_t = 0.0)]
    pub j2: f64,
    /// Site (1-based) of the local observables; default: the centre ⌈L/2⌉.
    #[arg(long)]
    pub site: Option<usize>,
    /// Build only the U(1) sector of total S^z = M (XXZ, free spins; M = 0, ±1, ... for even
    /// L, ±0.5, ... for odd L); at S^z = 0 of a clean XXZ chain the spin flip is resolved too.
    #[arg(long, value_name = "M", allow_negative_numbers = true)]
    pub sz: Option<f64>,
    /// Random fields hᵢ σᶻᵢ with hᵢ uniform in [−W, W] (XXZ; breaks reflection and flip).
    #[arg(long, value_name = "W")]
    pub disorder: Option<f64>,
    /// Number of disorder realizations (groups r000, r001, ...; seeds S, S+1, ...).
    #[arg(long, value_name = "N", default_value_t = 1)]
    pub realizations: usize,
    /// Dimension N (random matrices).
    #[arg(long, value_name = "N")]
    pub dim: Option<usize>,
    /// Seed (random matrices, random fields).
    #[arg(long, value_name = "S", default_value_t = 1)]
    pub seed: u64,
    /// Output HDF5 file (replaced if it exists).
    #[arg(long, value_name = "FILE")]
    pub out: PathBuf,
}

impl Args {
    /// The chain to build, or `None` for a random matrix; rejects options of the other kind.
    pub fn chain_spec(&self) -> Result<Option<ChainSpec>> {
        let model = match self.model {
            ModelKind::MixedFieldIsing => ChainModel::MixedFieldIsing {
                j: self.j,
                g: self.g,
                h: self.h,
            },
            ModelKind::TransverseFieldIsing => ChainModel::TransverseFieldIsing {
                j: self.j,
                g: self.g,
            },
            ModelKind::Xxz => ChainModel::Xxz {
                j: self.j,
                delta: self.delta,
                j2: self.j2,
            },
            ModelKind::FreeSpins => ChainModel::FreeSpins { h: self.h },
            ModelKind::Goe | ModelKind::Gue | ModelKind::Poisson => {
                if self.sites.is_some() {
                    return Err(Error::usage(
                        "--sites is for spin chains; random matrices take --dim",
                    ));
                }
                return Ok(None);
            }
        };
        if self.dim.is_some() {
            return Err(Error::usage(
                "--dim is for random matrices; spin chains take --sites",
            ));
        }
        if self.realizations == 0 || (self.realizations > 1 && self.disorder.is_none()) {
            return Err(Error::usage(
                "--realizations N (N ≥ 1) is for disordered chains: give --disorder W",
            ));
        }
        let sites = self
            .sites
            .ok_or_else(|| Error::usage("spin chains need --sites L"))?;
        Ok(Some(ChainSpec {
            model,
            sites,
            boundary: match self.boundary {
                BoundaryArg::Open => Boundary::Open,
                BoundaryArg::Periodic => Boundary::Periodic,
            },
            reflection: match self.reflection {
                ReflectionArg::Resolve => Reflection::Resolve,
                ReflectionArg::Ignore => Reflection::Ignore,
                ReflectionArg::Break => Reflection::Break {
                    field: self.break_field,
                },
            },
            site: self.site,
            sz: self.sz,
            disorder: self.disorder.map(|strength| crate::model::Disorder {
                strength,
                seed: self.seed,
                realization: 0,
            }),
        }))
    }
}

/// The sectors of `n` realizations of `spec` (seeds `seed + k`): one realization keeps its
/// group names, several are put under groups `r000`, `r001`, ...
fn realizations(spec: &ChainSpec, n: usize) -> Result<Vec<(SectorData, Duration)>> {
    let Some(d) = spec.disorder.filter(|_| n > 1) else {
        return build_chain_timed(spec);
    };
    let mut out = Vec::new();
    for k in 0..n {
        let one = ChainSpec {
            disorder: Some(crate::model::Disorder {
                seed: d.seed.wrapping_add(k as u64),
                realization: k,
                ..d
            }),
            ..spec.clone()
        };
        let built = build_chain_timed(&one)?;
        let single = built.len() == 1;
        for (mut s, t) in built {
            s.group = if single {
                format!("r{k:03}")
            } else {
                format!("r{k:03}/{}", s.group)
            };
            out.push((s, t));
        }
    }
    Ok(out)
}

/// Runs `eigentherm generate`: builds, diagonalises, writes, and prints one line per
/// sector written (group, dimension, time spent building and diagonalising).
pub fn run(args: &Args) -> Result<()> {
    let sectors: Vec<(SectorData, Duration)> = match args.chain_spec()? {
        Some(spec) => realizations(&spec, args.realizations)?,
        None => {
            let ensemble = match args.model {
                ModelKind::Goe => RandomEnsemble::Goe,
                ModelKind::Gue => RandomEnsemble::Gue,
                _ => RandomEnsemble::Poisson,
            };
            let dim = args
                .dim
                .ok_or_else(|| Error::usage("random matrices need --dim N"))?;
            let start = Instant::now();
            let s = build_random(&RandomSpec {
                ensemble,
                dim,
                seed: args.seed,
            })?;
            vec![(s, start.elapsed())]
        }
    };
    let start = Instant::now();
    let (data, times): (Vec<SectorData>, Vec<Duration>) = sectors.into_iter().unzip();
    write_file(&args.out, &data)?;
    let written = start.elapsed();
    let mut text = String::new();
    for (s, t) in data.iter().zip(&times) {
        let dim = s
            .eigenvectors
            .as_ref()
            .map(|v| v.nrows())
            .unwrap_or(s.energies.len());
        text.push_str(&format!(
            "{}: sector '{}' ({}), dim {dim}, {:.2} s\n",
            args.out.display(),
            s.group,
            s.label.as_deref().unwrap_or(""),
            t.as_secs_f64()
        ));
    }
    text.push_str(&format!("written in {:.2} s\n", written.as_secs_f64()));
    super::output::print(&text)
}
