//! Reading inputs: h5py fixtures, sector embeddings, the generate/inspect round trip, streaming from a file.
//!
//! This file only declares test modules and checks no values (common practice, no source);
//! each check names its source beside it in the module that makes it.

mod attributes;
mod compounds;
mod custom;
mod embedding;
mod fixtures;
mod fuzz;
mod layout;
mod limits;
mod links;
mod names;
mod orthonormal;
mod roundtrip;
mod stream_file;
