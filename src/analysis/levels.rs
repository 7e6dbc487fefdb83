//! (Not yet implemented.)
