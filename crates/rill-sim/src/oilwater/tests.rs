//! Tests of the oil-water engine.
