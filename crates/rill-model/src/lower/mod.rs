//! Lowering: from syntax trees (the main deck and its includes) to a
//! checked [`Case`] in SI, with a diagnostic for everything that does not fit
//! the schema. Physical sanity checks run afterwards in `checks`.

mod aquifer;
mod boundary;
mod fault;
mod fluid;
mod grid;
mod initial;
mod phases;
mod read;
mod relperm;
mod report;
mod rock;
mod structure;
mod timeline;
mod wells;

use crate::case::*;
use crate::derived;
use crate::diagnostic::{Code, Diagnostic, Location};
use crate::props::{
    check_result_dim, evaluate, evaluate_kept, infer_dim, Expr, Failed, Field, Forms, PropReader,
    Shape,
};
use crate::reuse::{kept, Reuse};
use crate::schema::{self, BlockDef, KeyDef, LabelRule, ValueKind};
use crate::source::Source;
use crate::values::{describe_expected, to_si, Gauge, Reporter};
use crate::FileInfo;
use rill_syntax::{Atom, AtomKind, Block, Item, Span, Statement, Value};
use rill_units::Dim;
use std::collections::HashMap;
use std::path::PathBuf;
use std::sync::Arc;

/// Largest grid checked: a slip such as `600 x 2200 x 850` would otherwise
/// allocate gigabytes per property, on every keystroke in an editor.
const MAX_CELLS: u64 = 20_000_000;

/// Deepest chain of includes followed.
const MAX_INCLUDE_DEPTH: usize = 16;
use crate::source::MAX_INCLUDE_LEN;

/// A block found in some file.
struct Found<'t> {
    file: usize,
    block: &'t Block,
}

pub(crate) struct Lowerer<'s> {
    pub source: &'s dyn Source,
    /// The analysis' cache: parsed arrays, and results kept between analyses.
    pub reuse: &'s Reuse,
    pub files: Vec<FileInfo>,
    pub diags: Vec<Diagnostic>,
    /// The fluid's formation volume factor once the fluid has lowered, for
    /// fixes that convert volumes between reservoir and surface conditions.
    pub fvf: Option<f64>,
    /// Names of every labelled `well` block, lowered or not: an event that
    /// names a well dropped for its own error is not a second mistake.
    pub written_wells: Vec<String>,
    /// Whether the deck is an oil-water deck (it has an `oil` or a `water`
    /// block), once the blocks are sorted: which keys and controls fit.
    pub two_phase: bool,
}

/// What lowering found beyond the case itself: spans of the definitions,
/// for checks that point back at the text.
#[derive(Debug, Clone, Default)]
pub struct Spans {
    /// Value span of each rock property definition (base and patches), by key.
    pub rock: HashMap<&'static str, Vec<Location>>,
    /// Each patch's value span and the box of cells it selects, by key, in
    /// deck order: checks name the patch that set a cell's value.
    pub rock_patches: HashMap<&'static str, Vec<(Location, Selection)>>,
    /// Value span of `dx`.
    pub dx: Option<Location>,
    /// Value span of `dy`.
    pub dy: Option<Location>,
    /// Value span of `dz`.
    pub dz: Option<Location>,
    /// Value span of the fluid's `viscosity`.
    pub viscosity: Option<Location>,
    /// Value span of the fluid's `fvf`.
    pub fvf: Option<Location>,
    /// Value span of the fluid's `density`.
    pub density: Option<Location>,
    /// Value span of the fluid's `compressibility`.
    pub fluid_compressibility: Option<Location>,
    /// Value span of the rock's `compressibility`.
    pub rock_compressibility: Option<Location>,
    /// Value spans of the `water` block's keys in an oil-water deck (the
    /// oil's are `viscosity`, `fvf`, `density` and `fluid_compressibility`).
    pub water: FluidSpans,
    /// Value span of the initial `water_contact`.
    pub water_contact: Option<Location>,
    /// Value span of the initial `water_saturation`.
    pub water_saturation: Option<Location>,
    /// Per well: (radius, control, bhp_limit, completions) spans.
    pub wells: Vec<WellSpans>,
    /// Value span of the initial `pressure`.
    pub initial: Option<Location>,
    /// Value span of each boundary's `pressure`, in deck order.
    pub boundaries: Vec<Location>,
    /// Value span of each fault's `multiplier` (its name where it has
    /// none), in deck order of the fault blocks.
    pub faults: Vec<Location>,
    /// Name span of the `timeline` block.
    pub timeline: Option<Location>,
    /// Value span of `first_step`.
    pub first_step: Option<Location>,
    /// Value span of `end`.
    pub end: Option<Location>,
    /// The start of the main deck, for diagnostics about the whole case.
    pub main: Location,
}

/// Value spans of the keys of a liquid's block (`water`).
#[derive(Debug, Clone, Default)]
pub struct FluidSpans {
    /// Value span of `viscosity`.
    pub viscosity: Option<Location>,
    /// Value span of `fvf`.
    pub fvf: Option<Location>,
    /// Value span of `density`.
    pub density: Option<Location>,
    /// Value span of `compressibility`.
    pub compressibility: Option<Location>,
}

/// Value spans of one well's keys, for checks that point back at them.
#[derive(Debug, Clone, Default)]
pub struct WellSpans {
    /// Value span of `radius`.
    pub radius: Option<Location>,
    /// Value span of `control`.
    pub control: Option<Location>,
    /// Value span of `bhp_limit`.
    pub bhp_limit: Option<Location>,
    /// Value span of `location` or `completions`.
    pub completions: Option<Location>,
    /// Value span of `max_water_cut`.
    pub max_water_cut: Option<Location>,
    /// Event controls: (event index, location).
    pub event_controls: Vec<(usize, Location)>,
    /// Event BHP limits: (event index, location).
    pub event_limits: Vec<(usize, Location)>,
    /// Event skins: (event index, location).
    pub event_skins: Vec<(usize, Location)>,
}

impl<'s> Lowerer<'s> {
    fn reporter(&mut self, file: usize) -> Reporter<'_> {
        Reporter {
            file,
            diags: &mut self.diags,
            fvf: self.fvf,
        }
    }

    /// Lower the deck `main_text` that stands at `main_path`: the case, when
    /// every required part lowered, and the spans found on the way.
    pub fn lower(&mut self, main_path: PathBuf, main_text: &str) -> (Option<Case>, Spans) {
        let loaded = self.load(main_path, main_text);
        let blocks = self.sort_blocks(&loaded);
        // Check the structure of every block once, whatever else happens.
        for list in blocks.values() {
            for f in list {
                let def = schema::top_block(&f.block.name.name).unwrap_or(&schema::CASE);
                self.check_block_structure(f.file, f.block, def);
            }
        }
        self.check_labels(&blocks);
        self.lower_blocks(&blocks)
    }

    /// Lowers every block named `name` with `lower`, keeping those that lowered.
    fn lower_each<T>(
        &mut self,
        blocks: &HashMap<&'static str, Vec<Found>>,
        name: &str,
        mut lower: impl FnMut(&mut Self, &Found) -> Option<T>,
    ) -> Vec<T> {
        let Some(list) = blocks.get(name) else {
            return Vec::new();
        };
        list.iter().filter_map(|f| lower(self, f)).collect()
    }

    /// Lower the sorted top-level blocks into a case.
    fn lower_blocks(
        &mut self,
        blocks: &HashMap<&'static str, Vec<Found>>,
    ) -> (Option<Case>, Spans) {
        let main_loc = Location::new(0, Span::new(0, 0));
        let mut spans = Spans {
            main: main_loc,
            ..Default::default()
        };
        let case_meta = blocks.get("case").and_then(|v| v.first());
        let title = case_meta.and_then(|f| {
            let stmt = find(f.block, "title")?;
            self.text_value(f.file, stmt)
        });
        let name = case_meta.and_then(|f| label_of(f.block));
        let title = title.or_else(|| name.clone());

        let grid = self
            .require(blocks, "grid", main_loc)
            .and_then(|f| self.lower_grid(f.file, f.block, &mut spans));
        let phase_blocks = self.phase_blocks(blocks, main_loc);
        let initial_found = self.require(blocks, "initial", main_loc);
        let rock_found = self.require(blocks, "rock", main_loc);
        let timeline_found = self.require(blocks, "timeline", main_loc);
        let relperms = self.relperm_blocks(blocks, self.two_phase, main_loc);

        let Some(grid) = grid else {
            return (None, spans);
        };
        let shape = Shape {
            nx: grid.nx,
            ny: grid.ny,
            nz: grid.nz,
        };
        let initial =
            initial_found.and_then(|f| self.lower_initial(f.file, f.block, shape, &mut spans));
        let datum_pressure = match &initial {
            Some(Initial::Datum { pressure, .. }) => Some(*pressure),
            Some(Initial::Cells(v)) if !v.is_empty() => {
                Some(v.iter().sum::<f64>() / v.len() as f64)
            }
            _ => None,
        };
        let rock = rock_found
            .and_then(|f| self.lower_rock(f.file, f.block, shape, datum_pressure, &mut spans));
        let (fluid, oil_water) = self.lower_phases(
            &phase_blocks,
            relperms,
            (rock_found, initial_found),
            &grid,
            datum_pressure,
            &mut spans,
        );
        self.written_wells = blocks
            .get("well")
            .map(|v| v.iter().filter_map(|f| label_of(f.block)).collect())
            .unwrap_or_default();
        let wells: Vec<Well> = self.lower_each(blocks, "well", |this, f| {
            this.lower_well(f.file, f.block, &grid, &mut spans)
        });
        let boundaries: Vec<Boundary> = self.lower_each(blocks, "boundary", |this, f| {
            this.lower_boundary(f.file, f.block, &grid, &mut spans)
        });
        let boundaries = self.without_overlap(boundaries, &grid);
        let faults: Vec<Fault> = self.lower_each(blocks, "fault", |this, f| {
            this.lower_fault(f.file, f.block, &grid, &mut spans)
        });
        let aquifers: Vec<Aquifer> = self.lower_each(blocks, "aquifer", |this, f| {
            this.lower_aquifer(f.file, f.block, &grid)
        });
        let aquifers = self.aquifers_without_overlap(aquifers, &boundaries, &grid);
        let timeline =
            timeline_found.and_then(|f| self.lower_timeline(f.file, f.block, &wells, &mut spans));
        let report = blocks
            .get("report")
            .and_then(|v| v.first())
            .map(|f| self.lower_report(f.file, f.block))
            .unwrap_or_default();

        let (Some(rock), Some(fluid), Some(initial), Some(timeline)) =
            (rock, fluid, initial, timeline)
        else {
            return (None, spans);
        };
        let Some(oil_water) = oil_water else {
            return (None, spans);
        };
        let expected_wells = blocks.get("well").map(|v| v.len()).unwrap_or(0);
        let expected_boundaries = blocks.get("boundary").map(|v| v.len()).unwrap_or(0);
        let expected_faults = blocks.get("fault").map(|v| v.len()).unwrap_or(0);
        let expected_aquifers = blocks.get("aquifer").map(|v| v.len()).unwrap_or(0);
        if wells.len() != expected_wells
            || boundaries.len() != expected_boundaries
            || faults.len() != expected_faults
            || aquifers.len() != expected_aquifers
        {
            return (None, spans);
        }
        let case = Case {
            title,
            name,
            grid,
            rock,
            fluid,
            oil_water,
            initial,
            wells,
            boundaries,
            faults,
            aquifers,
            timeline,
            report,
        };
        (Some(case), spans)
    }
}

/// The first statement with this key in a block.
pub fn find<'b>(block: &'b Block, key: &str) -> Option<&'b Statement> {
    block.items.iter().find_map(|i| match i {
        Item::Statement(s) if s.key.name == key => Some(s),
        _ => None,
    })
}

/// `value` escaped for writing inside quotes in a deck.
pub(crate) fn escape(value: &str) -> String {
    value.replace('\\', "\\\\").replace('"', "\\\"")
}

/// A block's string label, if it has one.
pub fn label_of(block: &Block) -> Option<String> {
    match block.args.first().map(|a| &a.kind) {
        Some(AtomKind::Str { value, .. }) => Some(value.clone()),
        _ => None,
    }
}

fn example_value(k: &KeyDef) -> String {
    match k.kind {
        ValueKind::Text => "\"...\"".into(),
        ValueKind::Size => "10 x 10 x 1".into(),
        ValueKind::Quantity(d) | ValueKind::Property(d) => {
            match rill_units::accepted_units(d).first() {
                Some(u) if d != Dim::NONE => format!("1 {u}"),
                _ => "0.2".into(),
            }
        }
        ValueKind::Number => "0".into(),
        ValueKind::Spacing(_) => "100 ft".into(),
        ValueKind::Top => "5000 ft".into(),
        ValueKind::PressureAtDepth => "3000 psi at 5000 ft".into(),
        ValueKind::Choice(c) => c.first().copied().unwrap_or("").into(),
        ValueKind::Column => "(1, 1)".into(),
        ValueKind::LayerRange => "1..1".into(),
        ValueKind::Cells => "[(1, 1, 1)]".into(),
        ValueKind::Control => "rate 500 stb/day".into(),
        ValueKind::Times => "[1 2 6] hr".into(),
        ValueKind::TableColumn(_) => "[0.2 0.5 0.8]".into(),
        ValueKind::RelpermName => "\"rock\"".into(),
    }
}
