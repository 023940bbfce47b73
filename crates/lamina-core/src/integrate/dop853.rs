//! Dormand–Prince 8(5,3), Hairer's DOP853.
