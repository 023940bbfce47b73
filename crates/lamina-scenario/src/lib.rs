//! Lamina scenario files, format 1 (RON).
