//! Reading inputs: h5py fixtures, sector embeddings, the generate/inspect round trip, streaming from a file.

mod custom;
mod embedding;
mod fixtures;
mod layout;
mod limits;
mod links;
mod names;
mod orthonormal;
mod roundtrip;
mod stream_file;
