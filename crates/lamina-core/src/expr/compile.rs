//! Parsing meval token streams into the instruction list.
