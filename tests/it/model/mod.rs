//! The reference models: spin chains, random matrices, the file writer, `generate`.

mod chain;
mod generate;
mod random;
mod writer;
