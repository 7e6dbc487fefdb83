//! The integration suite, one binary with a module per stage (built once, not once per
//! file): the command line, reading inputs, the reference models, level statistics, the
//! projector, the ETH analyses, quenches, finite-size scaling and the report. `util` holds
//! the file writers several modules share.

mod cli;
mod eth;
mod input;
mod levels;
mod model;
mod project;
mod quench;
mod report;
mod scaling;
mod util;
