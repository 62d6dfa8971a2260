//! Measurements of the real-space decision (filled in below).
