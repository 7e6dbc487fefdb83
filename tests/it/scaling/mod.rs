//! Finite-size fits, resampling, verdicts, and the demo study.
//!
//! This file only declares test modules and checks no values (common practice, no source);
//! each check names its source beside it in the module that makes it.

mod demo;
mod ensembles;
mod fits;
