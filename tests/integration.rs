//! The one integration-test binary; each module is one area.

/// Snapshot reader: valid files, every validation rule, malformed fixtures, fuzzing.
mod snapshot;

/// The binary on malformed snapshots: exit 2, `path:line:col:` on stderr, no panic; `-` is stdin.
mod cli_errors;
