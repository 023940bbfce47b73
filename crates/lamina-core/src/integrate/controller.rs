//! Step-size control: the PI controller.
