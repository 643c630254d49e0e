//! The trajectory metric (coming next).
