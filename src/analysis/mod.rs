//! The analyses. Each takes plain data (energies, matrix elements) and returns
//! plain serde structs; none touches HDF5 or formats output.

pub mod diagonal;
pub mod ensemble;
pub mod entanglement;
pub mod gauge;
pub mod kpm;
pub mod levels;
pub mod offdiagonal;
pub mod quench;
pub mod residual;
pub mod scaling;
pub mod sector;
pub mod study;
pub mod thermo;
