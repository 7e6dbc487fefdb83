//! Finite-size fits, resampling, verdicts, and the demo study.

mod demo;
mod ensembles;
mod fits;
