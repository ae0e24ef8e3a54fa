//! Pure functions turning measured errors into figures.
