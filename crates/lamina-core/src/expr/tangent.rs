//! Forward-mode derivatives (tangent propagation) through the instruction list.
