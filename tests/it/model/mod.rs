//! The reference models: spin chains, random matrices, the file writer, `generate`.
//!
//! This file only declares test modules and checks no values (common practice, no source);
//! each check names its source beside it in the module that makes it.

mod chain;
mod generate;
mod random;
mod writer;
