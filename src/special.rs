//! Special functions the reference problems need.
