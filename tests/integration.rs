//! The one integration-test binary; each module is one area.

/// Snapshot reader: valid files, every validation rule, malformed fixtures, fuzzing.
mod snapshot;
