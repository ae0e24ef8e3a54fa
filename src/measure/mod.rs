//! Running a check.
