//! The probes beyond two-point ETH statistics: the adiabatic-gauge-potential norm
//! (`gauge`) and, per eigenstate, the bipartite entanglement entropy (`entanglement`).
//!
//! This file only declares test modules and checks no values (common practice, no source);
//! each check names its source beside it in the module that makes it.

mod entanglement;
mod gauge;
