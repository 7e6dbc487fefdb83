//! Level statistics of one spectrum: is it chaotic (random-matrix-like) or not?
//!
//! Mathematics, in the order it is computed on the levels E_a ≤ … ≤ E_{b−1} of a window:
//!
//! 1. **Ratio of consecutive spacings** (Oganesyan & Huse, PRB 75, 155111 (2007);
//!    Atas, Bogomolny, Giraud, Roux, PRL 110, 084101 (2013)). With sᵢ = Eᵢ₊₁ − Eᵢ,
//!    r̃ᵢ = min(sᵢ, sᵢ₊₁)/max(sᵢ, sᵢ₊₁) ∈ [0, 1]; pairs with max = 0 (three equal
//!    levels) are skipped and counted. No unfolding is needed because the local
//!    density cancels in the ratio. The mean ⟨r̃⟩ is compared with 2 ln 2 − 1 ≈ 0.3863
//!    (Poisson), 0.5307 (GOE) and 0.5996 (GUE), and its full distribution with the
//!    surmises of Atas et al. (see [`surmise`]).
//!    *Standard error.* Consecutive r̃ᵢ share a spacing and are correlated, so the
//!    naive σ/√N underestimates the error. We use blocking (Flyvbjerg & Petersen,
//!    J. Chem. Phys. 91, 461 (1989)): the series is averaged in pairs repeatedly and
//!    σ_blocks/√N_blocks computed at each level; the largest value over the levels with
//!    at least 32 blocks is reported (the naive value is reported too).
//! 2. **Unfolding** by a polynomial fit of the staircase N(E) over the window, or by the
//!    integral of a Gaussian-broadened density of states, N̄(E) = Σⱼ Φ((E − Eⱼ)/σⱼ)
//!    ([`unfold`], chosen by [`LevelOptions::unfold`]); spacings of the unfolded levels, divided by their mean, give the
//!    nearest-neighbour spacing distribution P(s), compared with Poisson e^(−s) and the
//!    GOE and GUE Wigner surmises (Mehta 2004) by the Kolmogorov–Smirnov distance
//!    D = supₛ |F_emp(s) − F_ref(s)|. `nearest_ensemble` is the ensemble with the smallest
//!    D. The mean r̃ is classified separately (`ratio_class`: nearest reference, i.e.
//!    thresholds at the midpoints 0.4585 and 0.5652); a disagreement is a warning.
//! 3. **Long-range correlations** of the unfolded levels ([`spectral`]): the spectral
//!    form factor with a Gaussian filter and the number variance Σ²(L).
//! 4. **Diagnostics.** Degenerate pairs: consecutive levels with |ΔE| below
//!    `degeneracy_tol` × mean spacing of the window (default 1e−10). Warnings when a
//!    spectrum looks like a superposition of unresolved symmetry sectors: many
//!    degeneracies (more than 1 % of the pairs), or no level repulsion (the density of
//!    unfolded spacings below 0.25 exceeds 0.4, against 0.19 for the GOE surmise and 0.88
//!    for Poisson) together with a mean r̃ significantly between Poisson and GOE, or
//!    significantly below GOE with that density still clearly under Poisson's (< 0.8);
//!    and when the window holds fewer than `min_levels` levels (default 100).
//!
//! Every verdict concerns one finite spectrum; it suggests, it does not prove.

pub mod spectral;
pub mod surmise;
pub mod thouless;
pub mod unfold;

use crate::error::{Error, Result};
use crate::window::WindowSpec;
use serde::Serialize;
pub use spectral::{FormFactor, NumberVariancePoint, SffPoint};
pub use surmise::Ensemble;
pub use unfold::{UnfoldMethod, Unfolding};

/// Blocks needed at a blocking level for its standard error to count.
const MIN_BLOCKS: usize = 32;
/// Upper edge of the "small spacing" range used to detect missing level repulsion.
pub const SMALL_SPACING: f64 = 0.25;
/// Density of unfolded spacings below [`SMALL_SPACING`] above which level repulsion is
/// considered absent (GOE surmise 0.19, Poisson 0.88).
pub const NO_REPULSION_DENSITY: f64 = 0.4;
/// Fraction of degenerate consecutive pairs above which the spectrum is flagged.
pub const DEGENERATE_FRACTION: f64 = 0.01;
/// Systematic margin on ⟨r̃⟩ (besides 3 standard errors) before a value counts as
/// significantly below the GOE reference.
pub const RATIO_MARGIN: f64 = 0.01;

/// Kernel widths below this many mean spacings give a warning: the smooth staircase then
/// follows individual levels (common practice, no source).
pub const MIN_KERNEL_SPACINGS: f64 = 2.0;

/// Density of unfolded spacings below [`SMALL_SPACING`] under which a spectrum without level
/// repulsion is still clearly not Poisson (0.88): with ⟨r̃⟩ below GOE, the mark of a few
/// superposed chaotic spectra rather than of an integrable one.
pub const POISSON_LIKE_DENSITY: f64 = 0.8;

/// Options of the level-statistics analysis.
#[derive(Debug, Clone, Serialize)]
pub struct LevelOptions {
    /// Unfolding method and its parameter (default: polynomial of degree 5).
    pub unfold: UnfoldMethod,
    /// Number of bins of the r̃ histogram on [0, 1] (default 20).
    pub ratio_bins: usize,
    /// Number of bins of the spacing histogram on [0, `spacing_max`] (default 30).
    pub spacing_bins: usize,
    /// Upper edge of the spacing histogram (default 3).
    pub spacing_max: f64,
    /// Relative degeneracy tolerance: |ΔE| < tol × mean spacing counts as degenerate (default 1e−10).
    pub degeneracy_tol: f64,
    /// Fewer levels than this in the window triggers a warning (default 100).
    pub min_levels: usize,
    /// Width η of the Gaussian filter of the form factor, in units of the standard
    /// deviation of the unfolded levels (default 0.5).
    pub sff_eta: f64,
    /// Time range (τ_min, τ_max) of the form-factor table in Heisenberg times (default 1e−3 … 10).
    pub sff_range: (f64, f64),
    /// Table points per decade of τ (default 8).
    pub sff_points_per_decade: usize,
    /// Times averaged inside each table bin (default 128).
    pub sff_samples: usize,
    /// Tolerance ε of the Thouless-time criterion |log₁₀(K_c/K_RMT)| < ε
    /// ([`thouless`], default 0.08).
    pub sff_tolerance: f64,
    /// Interval lengths L of the number variance (default 0.5, 1, 2, 4, 8).
    pub number_variance_lengths: Vec<f64>,
    /// Interval centres averaged over for Σ²(L) (default 2000).
    pub number_variance_positions: usize,
}

impl Default for LevelOptions {
    fn default() -> Self {
        LevelOptions {
            unfold: UnfoldMethod::default(),
            ratio_bins: 20,
            spacing_bins: 30,
            spacing_max: 3.0,
            degeneracy_tol: 1e-10,
            min_levels: 100,
            sff_eta: 0.5,
            sff_range: (1e-3, 10.0),
            sff_points_per_decade: 8,
            sff_samples: 128,
            sff_tolerance: thouless::THOULESS_TOLERANCE,
            number_variance_lengths: vec![0.5, 1.0, 2.0, 4.0, 8.0],
            number_variance_positions: 2000,
        }
    }
}

/// One histogram bin with the reference densities averaged over the bin.
#[derive(Debug, Clone, Serialize)]
pub struct HistBin {
    /// Lower edge.
    pub lo: f64,
    /// Upper edge.
    pub hi: f64,
    /// Number of values in [lo, hi) (the last bin also holds values equal to hi).
    pub count: usize,
    /// Empirical density count / (N · width).
    pub density: f64,
    /// Poisson reference density (bin average).
    pub poisson: f64,
    /// GOE reference density (bin average).
    pub goe: f64,
    /// GUE reference density (bin average).
    pub gue: f64,
}

/// Mean r̃ and its classification.
#[derive(Debug, Clone, Serialize)]
pub struct RatioClass {
    /// Nearest reference ⟨r̃⟩.
    pub nearest: Ensemble,
    /// Threshold between Poisson-like and GOE-like (midpoint 0.4585).
    pub poisson_goe_threshold: f64,
    /// Threshold between GOE-like and GUE-like (midpoint 0.5652).
    pub goe_gue_threshold: f64,
    /// True when ⟨r̃⟩ lies more than 3 standard errors above Poisson and more than
    /// 3 standard errors plus [`RATIO_MARGIN`] below GOE (crossover or superposition).
    pub intermediate: bool,
}

/// Everything the level-statistics analysis measures on one spectrum.
#[derive(Debug, Clone, Serialize)]
pub struct LevelReport {
    /// Window as given (label).
    pub window: String,
    /// Index range [start, end) of the window in the ascending spectrum.
    pub window_indices: [usize; 2],
    /// Number of levels in the window.
    pub states: usize,
    /// Number of levels in the whole spectrum.
    pub total_states: usize,
    /// Lowest and highest energy in the window.
    pub energy_range: [f64; 2],
    /// Mean level spacing Δ̄ = (E_max − E_min)/(states − 1) in the window.
    pub mean_spacing: f64,
    /// ⟨r̃⟩ over the window.
    pub mean_r: f64,
    /// Standard error of ⟨r̃⟩ by blocking (see the module documentation).
    pub mean_r_stderr: f64,
    /// Naive standard error σ/√N (ignores correlations between consecutive ratios).
    pub mean_r_stderr_naive: f64,
    /// Number of ratios averaged.
    pub ratios: usize,
    /// Ratios skipped because both spacings were zero.
    pub skipped_ratios: usize,
    /// Reference ⟨r̃⟩: Poisson, GOE, GUE.
    pub reference_mean_r: [f64; 3],
    /// Classification of ⟨r̃⟩.
    pub ratio_class: RatioClass,
    /// Consecutive pairs with |ΔE| < `degeneracy_tolerance`.
    pub degenerate_pairs: usize,
    /// Absolute degeneracy tolerance used, `degeneracy_tol` × mean spacing.
    pub degeneracy_tolerance: f64,
    /// Relative degeneracy tolerance (in mean spacings).
    pub degeneracy_tol_relative: f64,
    /// Histogram of r̃ on [0, 1] with the surmises of Atas et al. (2013).
    pub ratio_histogram: Vec<HistBin>,
    /// How the spectrum was unfolded.
    pub unfolding: Unfolding,
    /// Kolmogorov–Smirnov distance of the unfolded spacings to Poisson e^(−s).
    pub ks_poisson: f64,
    /// Kolmogorov–Smirnov distance to the GOE Wigner surmise.
    pub ks_goe: f64,
    /// Kolmogorov–Smirnov distance to the GUE Wigner surmise.
    pub ks_gue: f64,
    /// Ensemble with the smallest KS distance.
    pub nearest_ensemble: Ensemble,
    /// Histogram of the unfolded spacings (unit mean) with the reference laws.
    pub spacing_histogram: Vec<HistBin>,
    /// Density of unfolded spacings below 0.25 (Poisson 0.885, GOE surmise 0.193, GUE 0.013).
    pub small_spacing_density: f64,
    /// Spectral form factor of the unfolded window.
    pub form_factor: FormFactor,
    /// The unfolded window levels at unit mean spacing (for ensemble averages; not in JSON).
    #[serde(skip)]
    pub unfolded: Vec<f64>,
    /// Number variance Σ²(L).
    pub number_variance: Vec<NumberVariancePoint>,
    /// One-paragraph verdict stating thresholds and the finite-size caveat.
    pub verdict: String,
    /// Plain-word warnings.
    pub warnings: Vec<String>,
}

/// The folded spacing ratios r̃ᵢ = min(sᵢ, sᵢ₊₁)/max(sᵢ, sᵢ₊₁) of ascending levels,
/// and the number of pairs skipped because max(sᵢ, sᵢ₊₁) = 0.
pub fn spacing_ratios(levels: &[f64]) -> (Vec<f64>, usize) {
    let s: Vec<f64> = levels.windows(2).map(|w| w[1] - w[0]).collect();
    let mut r = Vec::with_capacity(s.len().saturating_sub(1));
    let mut skipped = 0;
    for w in s.windows(2) {
        let (a, b) = (w[0].abs(), w[1].abs());
        let mx = a.max(b);
        if mx > 0.0 {
            r.push(a.min(b) / mx);
        } else {
            skipped += 1;
        }
    }
    (r, skipped)
}

/// Mean, naive standard error σ/√N, and blocking standard error of `x`
/// (largest over pairwise-averaging levels with at least 32 blocks).
pub fn mean_with_stderr(x: &[f64]) -> (f64, f64, f64) {
    fn mean_se(v: &[f64]) -> (f64, f64) {
        let n = v.len() as f64;
        let m = v.iter().sum::<f64>() / n;
        if v.len() < 2 {
            return (m, f64::NAN);
        }
        let var = v.iter().map(|a| (a - m).powi(2)).sum::<f64>() / (n - 1.0);
        (m, (var / n).sqrt())
    }
    if x.is_empty() {
        return (f64::NAN, f64::NAN, f64::NAN);
    }
    let (m, naive) = mean_se(x);
    let mut best = naive;
    let mut v = x.to_vec();
    while v.len() / 2 >= MIN_BLOCKS {
        v = v.chunks_exact(2).map(|c| 0.5 * (c[0] + c[1])).collect();
        let (_, se) = mean_se(&v);
        if se > best {
            best = se;
        }
    }
    (m, naive, best)
}

/// Kolmogorov–Smirnov distance supₛ |F_emp(s) − F(s)| of the sample `sorted` (ascending).
pub fn ks_distance(sorted: &[f64], cdf: impl Fn(f64) -> f64) -> f64 {
    let n = sorted.len() as f64;
    sorted
        .iter()
        .enumerate()
        .map(|(i, &s)| {
            let f = cdf(s);
            (f - i as f64 / n).max((i + 1) as f64 / n - f)
        })
        .fold(0.0, f64::max)
}

/// Histogram of `values` on [lo, hi) in `bins` bins, with reference densities averaged
/// over each bin by `reference(ensemble, a, b)`.
fn histogram(
    values: &[f64],
    lo: f64,
    hi: f64,
    bins: usize,
    reference: impl Fn(Ensemble, f64, f64) -> f64,
) -> Vec<HistBin> {
    let bins = bins.max(1);
    let width = (hi - lo) / bins as f64;
    let mut counts = vec![0usize; bins];
    for &v in values {
        if v >= lo && v <= hi {
            let k = (((v - lo) / width) as usize).min(bins - 1);
            counts[k] += 1;
        }
    }
    let n = values.len().max(1) as f64;
    counts
        .into_iter()
        .enumerate()
        .map(|(k, count)| {
            let (a, b) = (lo + k as f64 * width, lo + (k + 1) as f64 * width);
            HistBin {
                lo: a,
                hi: b,
                count,
                density: count as f64 / (n * width),
                poisson: reference(Ensemble::Poisson, a, b),
                goe: reference(Ensemble::Goe, a, b),
                gue: reference(Ensemble::Gue, a, b),
            }
        })
        .collect()
}

/// The unfolded levels of a window and the statistics of their spacings.
struct Spacings {
    unfolded: Vec<f64>,
    unfolding: unfold::Unfolding,
    mean_s: f64,
    ks: [f64; 3],
    nearest_ensemble: Ensemble,
    spacing_histogram: Vec<HistBin>,
    small_spacing_density: f64,
}

/// Unfolds the window `range` of the ascending `energies`, rescales the spacings to unit
/// mean, and measures their distribution: Kolmogorov–Smirnov distances to the three
/// references, the nearest one, the histogram and the density of small spacings. Warnings
/// about the unfolding go to `warnings`.
fn unfolded_spacings(
    energies: &[f64],
    range: std::ops::Range<usize>,
    opts: &LevelOptions,
    mean_spacing: f64,
    warnings: &mut Vec<String>,
) -> Result<Spacings> {
    let (unfolded, unfolding) = unfold::unfold(energies, range.clone(), opts.unfold)?;
    let raw_s: Vec<f64> = unfolded.windows(2).map(|w| w[1] - w[0]).collect();
    let mean_s = raw_s.iter().sum::<f64>() / raw_s.len() as f64;
    if mean_s.is_nan() || mean_s <= 0.0 {
        return Err(Error::other(
            "unfolding failed: the mean unfolded spacing is not positive",
        ));
    }
    let mut s: Vec<f64> = raw_s.iter().map(|x| (x / mean_s).max(0.0)).collect();
    s.sort_by(f64::total_cmp);
    let ks = Ensemble::ALL.map(|ens| ks_distance(&s, |x| ens.spacing_cdf(x)));
    let nearest_ensemble = Ensemble::ALL
        .into_iter()
        .zip(ks)
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .map(|(ens, _)| ens)
        .unwrap_or(Ensemble::Poisson);
    let spacing_histogram = histogram(&s, 0.0, opts.spacing_max, opts.spacing_bins, |ens, a, b| {
        (ens.spacing_cdf(b) - ens.spacing_cdf(a)) / (b - a)
    });
    let small = s.partition_point(|&x| x < SMALL_SPACING);
    let small_spacing_density = small as f64 / (s.len() as f64 * SMALL_SPACING);
    if unfolding.negative_spacings > 0 {
        warnings.push(format!(
            "the unfolding ({}) decreases between {} pair(s) of levels; try a lower degree or --unfold kernel",
            unfolding.spec, unfolding.negative_spacings
        ));
    }

    let kernel_spacings = match opts.unfold {
        UnfoldMethod::Kernel { spacings } => Some(spacings),
        UnfoldMethod::KernelEnergy { sigma } => Some(sigma / mean_spacing),
        UnfoldMethod::Polynomial { .. } => None,
    };
    if let Some(k) = kernel_spacings.filter(|&k| k < MIN_KERNEL_SPACINGS) {
        warnings.push(format!(
            "the unfolding kernel ({}) is {k:.3} mean spacings wide, narrower than {MIN_KERNEL_SPACINGS}: the smooth staircase follows individual levels and pulls the unfolded spacings towards 1 (use several spacings, e.g. --unfold kernel:32)",
            unfolding.spec
        ));
    }
    if let Some(k) = unfolding.kernel_end_levels.filter(|&k| k > 0) {
        warnings.push(format!(
            "{k} level(s) of the window lie within 2 kernel widths of an end of the whole spectrum, where the kernel staircase ({}) is biased (the broadened density spills past the last level); choose a window away from the ends or a narrower kernel",
            unfolding.spec
        ));
    }

    Ok(Spacings {
        unfolded,
        unfolding,
        mean_s,
        ks,
        nearest_ensemble,
        spacing_histogram,
        small_spacing_density,
    })
}

/// What [`diagnostics`] looks at.
struct Diagnosis<'a> {
    n: usize,
    degenerate_pairs: usize,
    degeneracy_tol: f64,
    tol: f64,
    small_spacing_density: f64,
    intermediate: bool,
    mean_r: f64,
    se3: f64,
    ratio_nearest: Ensemble,
    nearest_ensemble: Ensemble,
    unfolding_spec: &'a str,
}

/// Warnings about degeneracies, unresolved symmetries, crossover statistics and a
/// disagreement of the two classifications.
fn diagnostics(d: &Diagnosis<'_>, warnings: &mut Vec<String>) {
    let Diagnosis {
        n,
        degenerate_pairs,
        tol,
        small_spacing_density,
        intermediate,
        mean_r,
        se3,
        ratio_nearest,
        nearest_ensemble,
        ..
    } = *d;
    let pairs = n - 1;
    let many_degenerate = degenerate_pairs as f64 > DEGENERATE_FRACTION * pairs as f64;
    if degenerate_pairs > 0 {
        warnings.push(format!(
            "{degenerate_pairs} of {pairs} consecutive pairs are degenerate (|dE| < {:e} x mean spacing = {tol:.3e}){}",
            d.degeneracy_tol,
            if many_degenerate {
                ": more than 1% of the pairs, which points to a symmetry that is not resolved into sectors"
            } else {
                ""
            }
        ));
    }
    let no_repulsion = small_spacing_density > NO_REPULSION_DENSITY;
    // A superposition of a few independent chaotic spectra: ⟨r̃⟩ significantly below GOE and
    // small spacings more frequent than for GOE, yet clearly less frequent than for Poisson.
    let below_goe = mean_r < surmise::MEAN_R_GOE - se3 - RATIO_MARGIN;
    let partial_repulsion = no_repulsion && small_spacing_density < POISSON_LIKE_DENSITY;
    if (intermediate && no_repulsion) || (below_goe && partial_repulsion) {
        warnings.push(format!(
            "possible superposition of unresolved symmetry sectors: mean r = {mean_r:.4} lies below GOE and the spacing histogram shows no level repulsion (density of spacings below {SMALL_SPACING} is {small_spacing_density:.2} > {NO_REPULSION_DENSITY}; GOE 0.19, Poisson 0.88); resolve the symmetries (parity, momentum, magnetisation) before judging chaos"
        ));
    } else if intermediate {
        warnings.push(format!(
            "mean r = {mean_r:.4} lies significantly between Poisson and GOE: crossover statistics (finite size, weak integrability breaking or localisation); compare several system sizes"
        ));
    }
    if ratio_nearest != nearest_ensemble {
        warnings.push(format!(
            "the mean ratio points to {} but the unfolded spacing distribution is closest to {}; the unfolding ({}) or the window may be inadequate, or the statistics are intermediate",
            ratio_nearest, nearest_ensemble, d.unfolding_spec
        ));
    }
}

/// The energies in ascending order (sorted, with a warning, when they are not); an error
/// when one is not finite.
fn ascending<'a>(
    energies: &'a [f64],
    warnings: &mut Vec<String>,
) -> Result<std::borrow::Cow<'a, [f64]>> {
    if let Some(i) = energies.iter().position(|e| !e.is_finite()) {
        return Err(Error::other(format!(
            "energy {i} is {} (all energies must be finite)",
            energies[i]
        )));
    }
    if energies.windows(2).all(|w| w[0] <= w[1]) {
        return Ok(std::borrow::Cow::Borrowed(energies));
    }
    warnings.push("energies were not ascending; they were sorted".to_string());
    let mut v = energies.to_vec();
    v.sort_by(f64::total_cmp);
    Ok(std::borrow::Cow::Owned(v))
}

/// Level statistics of the ascending spectrum `energies` over `window`.
///
/// Errors (plain words, no panic) when an energy is not finite, when the window holds
/// fewer than 4 levels, or when all its levels are equal. Unsorted input is sorted
/// (with a warning).
pub fn analyze(energies: &[f64], window: &WindowSpec, opts: &LevelOptions) -> Result<LevelReport> {
    let mut warnings = Vec::new();
    let energies = ascending(energies, &mut warnings)?;
    let energies: &[f64] = &energies;
    let range = window.indices(energies);
    let e = &energies[range.clone()];
    let n = e.len();
    if n < 4 {
        return Err(Error::other(format!(
            "window {} holds {n} of {} levels; level statistics need at least 4",
            window.label(),
            energies.len()
        )));
    }
    let span = e[n - 1] - e[0];
    if span <= 0.0 {
        return Err(Error::other(format!(
            "all {n} levels in window {} are equal; no level statistics possible",
            window.label()
        )));
    }
    let mean_spacing = span / (n - 1) as f64;
    if n < opts.min_levels {
        warnings.push(format!(
            "only {n} levels in the window (fewer than {}): statistical errors are large and the verdict is unreliable",
            opts.min_levels
        ));
    }

    // 1. ratios
    let (r, skipped) = spacing_ratios(e);
    let (mean_r, se_naive, se) = mean_with_stderr(&r);
    if skipped > 0 {
        warnings.push(format!(
            "{skipped} ratio(s) skipped because both spacings were zero (three or more equal levels)"
        ));
    }
    let ratio_histogram = histogram(&r, 0.0, 1.0, opts.ratio_bins, |ens, a, b| {
        surmise::simpson(|x| ens.ratio_density(x), a, b, 16) / (b - a)
    });
    let mid1 = 0.5 * (surmise::MEAN_R_POISSON + surmise::MEAN_R_GOE);
    let mid2 = 0.5 * (surmise::MEAN_R_GOE + surmise::MEAN_R_GUE);
    let ratio_nearest = if mean_r.is_nan() || mean_r < mid1 {
        Ensemble::Poisson
    } else if mean_r < mid2 {
        Ensemble::Goe
    } else {
        Ensemble::Gue
    };
    let se3 = if se.is_finite() { 3.0 * se } else { 0.0 };
    let intermediate =
        mean_r > surmise::MEAN_R_POISSON + se3 && mean_r < surmise::MEAN_R_GOE - se3 - RATIO_MARGIN;

    // degeneracies
    let tol = opts.degeneracy_tol * mean_spacing;
    let degenerate_pairs = e.windows(2).filter(|w| (w[1] - w[0]).abs() < tol).count();

    // 2. unfolding and spacings
    let Spacings {
        unfolded,
        unfolding,
        mean_s,
        ks,
        nearest_ensemble,
        spacing_histogram,
        small_spacing_density,
    } = unfolded_spacings(energies, range.clone(), opts, mean_spacing, &mut warnings)?;

    // 3. long-range correlations (unfolded levels rescaled to unit mean spacing)
    let eps: Vec<f64> = unfolded.iter().map(|x| x / mean_s).collect();
    let form_factor = spectral::form_factor(
        &eps,
        opts.sff_eta,
        mean_spacing,
        opts.sff_range,
        opts.sff_points_per_decade,
        opts.sff_samples,
    );
    let mut eps_sorted = eps.clone();
    eps_sorted.sort_by(f64::total_cmp);
    let number_variance = spectral::number_variance(
        &eps_sorted,
        &opts.number_variance_lengths,
        opts.number_variance_positions,
    );

    // 4. diagnostics
    diagnostics(
        &Diagnosis {
            n,
            degenerate_pairs,
            degeneracy_tol: opts.degeneracy_tol,
            tol,
            small_spacing_density,
            intermediate,
            mean_r,
            se3,
            ratio_nearest,
            nearest_ensemble,
            unfolding_spec: &unfolding.spec,
        },
        &mut warnings,
    );

    let verdict = format!(
        "{}-like by the mean ratio: <r> = {mean_r:.4} +/- {se:.4} (Poisson-like below {mid1:.4}, GOE-like from {mid1:.4} to {mid2:.4}, GUE-like above {mid2:.4}: midpoints between the references 0.3863, 0.5307, 0.5996); unfolded spacings closest to {nearest_ensemble} (KS distances Poisson {:.3}, GOE {:.3}, GUE {:.3}). Finite size: {n} levels in one window of one finite system; the statistics suggest, they do not prove, chaos or integrability. Check that the verdict persists as the system grows.",
        ratio_nearest, ks[0], ks[1], ks[2]
    );

    Ok(LevelReport {
        window: window.label(),
        window_indices: [range.start, range.end],
        states: n,
        total_states: energies.len(),
        energy_range: [e[0], e[n - 1]],
        mean_spacing,
        mean_r,
        mean_r_stderr: se,
        mean_r_stderr_naive: se_naive,
        ratios: r.len(),
        skipped_ratios: skipped,
        reference_mean_r: [
            surmise::MEAN_R_POISSON,
            surmise::MEAN_R_GOE,
            surmise::MEAN_R_GUE,
        ],
        ratio_class: RatioClass {
            nearest: ratio_nearest,
            poisson_goe_threshold: mid1,
            goe_gue_threshold: mid2,
            intermediate,
        },
        degenerate_pairs,
        degeneracy_tolerance: tol,
        degeneracy_tol_relative: opts.degeneracy_tol,
        ratio_histogram,
        unfolding,
        ks_poisson: ks[0],
        ks_goe: ks[1],
        ks_gue: ks[2],
        nearest_ensemble,
        spacing_histogram,
        small_spacing_density,
        form_factor,
        unfolded: eps,
        number_variance,
        verdict,
        warnings,
    })
}

/// The level statistics of one (file, sector).
#[derive(Debug, Clone, Serialize)]
pub struct SectorLevels {
    /// The file.
    pub file: String,
    /// Sector name.
    pub name: String,
    /// Sector name, the key every command uses (`name` holds the same, kept for the
    /// contract's `levels`/`diagonal` keys).
    pub sector: String,
    /// Symmetry class and how it was decided (`symmetry_class`, `class_source`).
    #[serde(flatten)]
    pub class: crate::data::ClassInfo,
    /// Attribute `realization` of the sector (a member of an ensemble), when present.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub realization: Option<usize>,
    /// Attribute `disorder` of the sector, when present.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub disorder: Option<f64>,
    /// The measured figures (flattened into the same JSON object).
    #[serde(flatten)]
    pub report: LevelReport,
}

/// JSON document of `eigentherm levels --json`.
#[derive(Debug, Clone, Serialize)]
pub struct LevelsOutput {
    /// Options used.
    pub options: LevelOptions,
    /// One entry per (file, sector).
    pub sectors: Vec<SectorLevels>,
    /// Realization averages over the sectors with a `realization` attribute
    /// ([`crate::analysis::ensemble`]); absent when there are none.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub ensembles: Vec<crate::analysis::ensemble::EnsembleAverage>,
    /// ⟨r̃⟩ against disorder strength per size, with crossings; absent without a scan.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub disorder_scan: Option<crate::analysis::ensemble::DisorderScan>,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ratios_of_a_small_spectrum() {
        // definition of r̃ (Oganesyan & Huse 2007): spacings 1, 2, 2, 0.5
        let (r, skipped) = spacing_ratios(&[0.0, 1.0, 3.0, 5.0, 5.5]);
        assert_eq!(skipped, 0);
        assert_eq!(r, vec![0.5, 1.0, 0.25]);
    }

    #[test]
    fn ks_distance_of_a_perfect_sample_is_small() {
        // common practice, no source: quantiles of a law are within 1/N of its CDF
        let n = 1000;
        let s: Vec<f64> = (0..n)
            .map(|i| -(1.0 - (i as f64 + 0.5) / n as f64).ln())
            .collect();
        let d = ks_distance(&s, |x| Ensemble::Poisson.spacing_cdf(x));
        assert!(d <= 0.5 / n as f64 + 1e-12, "{d}");
    }

    #[test]
    fn blocking_catches_correlations() {
        // common practice (Flyvbjerg & Petersen 1989): a series where each value is
        // repeated 8 times has a true standard error √8 times the naive one.
        use rand::Rng;
        let mut rng = crate::model::rmt::rng(7);
        let base: Vec<f64> = (0..4096).map(|_| rng.random::<f64>()).collect();
        let x: Vec<f64> = base.iter().flat_map(|&v| [v; 8]).collect();
        let (_, naive, blocked) = mean_with_stderr(&x);
        let ratio = blocked / naive;
        assert!(ratio > 2.4 && ratio < 3.2, "{ratio}");
    }
}
