//! Snapshot reader.
