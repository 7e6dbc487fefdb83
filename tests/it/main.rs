//! The integration suite, one binary with a module per stage (built once, not once per
//! file): the command line, reading inputs, the reference models, level statistics, the
//! projector, the ETH analyses, quenches, finite-size scaling and the report. `util` holds
//! the file writers several modules share.
//!
//! This file only declares test modules and checks no values (common practice, no source);
//! each check names its source beside it in the module that makes it.

mod cli;
mod eth;
mod input;
mod levels;
mod model;
mod probes;
mod project;
mod quench;
mod report;
mod scaling;
mod util;
