//! The one integration-test binary; each module is one area.

// The command line against the independent Python implementation's fixtures.
mod independent;
