//! Quench dynamics: analytic checks and the command end to end.
//!
//! This file only declares test modules and checks no values (common practice, no source);
//! each check names its source beside it in the module that makes it.

mod commands;
mod dynamics;
mod window;
