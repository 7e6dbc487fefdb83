//! Projection of operators onto a window of energy eigenstates (the hot path).
//! (Not yet implemented.)
