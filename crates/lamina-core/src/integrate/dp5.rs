//! Dormand–Prince 5(4).
