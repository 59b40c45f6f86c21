//! Root finding, compound and base correlation.
