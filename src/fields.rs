//! SKELETON: being implemented (issue 2).
