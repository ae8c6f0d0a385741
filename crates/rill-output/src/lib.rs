//! `rill-output` owns the files a run writes: `series.csv`, `series.json`,
//! VTK maps with a `.pvd` collection, SVG plots and the self-contained
//! `report.html`, all written atomically into the output directory.
//!
//! It must never compute physics: it formats what `rill-sim` produced.
