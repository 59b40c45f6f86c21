//! Default history reader.
