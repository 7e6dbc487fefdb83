//! The projector: operator forms, streaming, and a NumPy fixture.

mod fixture;
mod forms;
