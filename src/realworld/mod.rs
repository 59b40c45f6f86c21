//! Real-world calibration from default histories.
