//! One module per subcommand: options (clap) and the glue between the stages.
//! Analyses never touch HDF5 directly; commands open files through [`crate::input`]
//! and pass plain data on.

pub mod common;
pub mod demo;
pub mod diagonal;
pub mod generate;
pub mod inspect;
pub mod levels;
pub mod offdiagonal;
pub mod quench;
pub mod scaling;
pub mod sector;
pub mod study;
