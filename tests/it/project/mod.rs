//! The projector: operator forms, streaming, and a NumPy fixture.
//!
//! This file only declares test modules and checks no values (common practice, no source);
//! each check names its source beside it in the module that makes it.

mod fixture;
mod forms;
