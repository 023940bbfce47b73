//! Lamina exports: CSV point sets, written atomically.
