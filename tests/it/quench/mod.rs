//! Quench dynamics: analytic checks and the command end to end.

mod commands;
mod dynamics;
mod window;
