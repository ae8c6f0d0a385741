//! No input panics the oil-water engine. Random oil-water decks (small
//! grids, inactive layers, Corey and table curves at their edges, contacts
//! above, inside and below the grid or saturations given, every phase
//! control, limits, water-cut limits, boundaries, aquifers, events) and
//! mutated oil-water decks from the examples and fixtures are checked;
//! those that check clean are run. A run either ends with both phases'
//! balance errors at most 1e-8, saturations in [0, 1] and finite pressures
//! and rates, or stops with a message. A panic fails with the deck.
//!
//! Case counts come from `PROPTEST_CASES` (a small default for CI);
//! `scripts/fuzz-checker` runs the long campaign. Each property prints its
//! tallies (decks, clean, finished, stopped by kind, refused by code; run
//! with `--nocapture`); `SHOW_STOPS=1` also prints every run error with
//! its deck, `SHOW_SLOWEST=1` the slowest deck. Edge cases found this
//! way are kept, minimal, with the engine's answer, in `oil_water_edges.rs`.

use std::cell::{Cell, RefCell};
use std::collections::BTreeMap;
use std::panic::{catch_unwind, AssertUnwindSafe};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use proptest::prelude::*;
use proptest::test_runner::{TestCaseError, TestRunner};
use rill_model::{analyze_text, Analysis, Case, MemorySource, Severity};
use rill_sim::{run, Observer, RunError, RunOptions, RunResults};

#[path = "common/oil_water_decks.rs"]
mod decks;
use decks::{deck, log_range, round};

// The edits of the checker's campaign, so both campaigns break decks alike.
#[path = "../../rill-model/tests/mutation/mod.rs"]
mod mutation;

/// The largest balance error a finished run may report for either phase
/// (the engine's own tolerance is 1e-10).
const BALANCE_LIMIT: f64 = 1e-8;
/// A run on these few cells and days that takes longer is a defect in
/// itself (the step guard should have stopped it long before).
const WALL_LIMIT: Duration = Duration::from_secs(120);

fn config(default_cases: u32) -> ProptestConfig {
    ProptestConfig {
        cases: std::env::var("PROPTEST_CASES")
            .ok()
            .and_then(|v| v.parse().ok())
            .unwrap_or(default_cases),
        failure_persistence: None,
        // Shrinking reruns the engine; a slow failure is printed as found
        // rather than shrunk for hours.
        max_shrink_time: 120_000,
        ..ProptestConfig::default()
    }
}

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../..")
}

/// Tallies of a campaign, printed at its end.
#[derive(Default)]
struct Tally {
    decks: Cell<usize>,
    clean: Cell<usize>,
    ok: Cell<usize>,
    errors: Cell<usize>,
    slowest: Cell<f64>,
    slowest_deck: RefCell<String>,
    /// Run errors by kind.
    stops: RefCell<BTreeMap<String, usize>>,
    /// The first error of each deck that did not check clean, by code.
    refused: RefCell<BTreeMap<String, usize>>,
}

impl Tally {
    fn bump(c: &Cell<usize>) {
        c.set(c.get() + 1);
    }
    fn skipped(&self, a: &Analysis) {
        if let Some(d) = a.diagnostics.iter().find(|d| d.severity == Severity::Error) {
            *self
                .refused
                .borrow_mut()
                .entry(d.code.to_string())
                .or_default() += 1;
        }
    }
    fn report(&self, what: &str) {
        eprintln!(
            "{what}: {} decks, {} checked clean and ran: {} finished, {} stopped with an error {:?}; slowest run {:.2} s; refused by the checker: {:?}",
            self.decks.get(),
            self.clean.get(),
            self.ok.get(),
            self.errors.get(),
            self.stops.borrow(),
            self.slowest.get(),
            self.refused.borrow()
        );
        if std::env::var_os("SHOW_SLOWEST").is_some() {
            eprintln!("the slowest deck:\n{}", self.slowest_deck.borrow());
        }
    }
}

/// Stops a run that exceeds `WALL_LIMIT`, so a hang fails the test instead
/// of stalling it.
struct Deadline(Instant);
impl Observer for Deadline {
    fn cancelled(&self) -> bool {
        self.0.elapsed() > WALL_LIMIT
    }
}

fn analyze(text: &str) -> Analysis {
    let path = Path::new("/decks/random.rill");
    analyze_text(path, text, &MemorySource::new())
}

/// Runs a checked case and holds its outcome to the rules of the module
/// doc; every failure carries the deck.
fn run_and_check(case: &Case, deck: &str, tally: &Tally) -> Result<(), TestCaseError> {
    Tally::bump(&tally.clean);
    let start = Instant::now();
    let outcome = catch_unwind(AssertUnwindSafe(|| {
        run(case, &RunOptions::default(), &mut Deadline(start))
    }));
    let seconds = start.elapsed().as_secs_f64();
    if seconds > tally.slowest.get() {
        tally.slowest.set(seconds);
        *tally.slowest_deck.borrow_mut() = deck.to_string();
    }
    let fail = |what: String| TestCaseError::fail(format!("{what}\n--- deck ---\n{deck}"));
    match outcome {
        Err(payload) => {
            let msg = payload
                .downcast_ref::<String>()
                .cloned()
                .or_else(|| payload.downcast_ref::<&str>().map(|s| s.to_string()))
                .unwrap_or_default();
            Err(fail(format!("the oil-water engine panicked: {msg}")))
        }
        Ok(Err(RunError::Cancelled { time })) => Err(fail(format!(
            "the run took more than {} s (stopped at t = {time} s)",
            WALL_LIMIT.as_secs()
        ))),
        Ok(Err(e)) => {
            Tally::bump(&tally.errors);
            let kind = format!("{e:?}");
            let kind = kind.split([' ', '(', '{']).next().unwrap_or("").to_string();
            if std::env::var_os("SHOW_STOPS").is_some() {
                eprintln!("STOP {e}\n{deck}");
            }
            *tally.stops.borrow_mut().entry(kind).or_default() += 1;
            if e.to_string().trim().is_empty() {
                return Err(fail(format!("a run error with no message: {e:?}")));
            }
            Ok(())
        }
        Ok(Ok(r)) => {
            Tally::bump(&tally.ok);
            check_results(case, &r).map_err(fail)
        }
    }
}

/// What a finished oil-water run must hold.
fn check_results(case: &Case, r: &RunResults) -> Result<(), String> {
    let Some(ow) = &r.oil_water else {
        return Err("an oil-water run without oil-water results".into());
    };
    for (name, errs) in [
        ("oil", &ow.balance_error_oil),
        ("water", &ow.balance_error_water),
    ] {
        if let Some((i, e)) = errs
            .iter()
            .enumerate()
            .find(|(_, e)| e.is_nan() || **e > BALANCE_LIMIT)
        {
            return Err(format!(
                "{name} balance error {e:e} at report time {} s (limit {BALANCE_LIMIT:e})",
                r.times.get(i).copied().unwrap_or(f64::NAN)
            ));
        }
    }
    let n = case.grid.cell_count();
    for (t, (p, s)) in r.pressure.iter().zip(&ow.saturation).enumerate() {
        if p.len() != n || s.len() != n {
            return Err(format!(
                "maps of {} and {} values for {n} cells",
                p.len(),
                s.len()
            ));
        }
        for c in 0..n {
            let active = case.rock.is_active(c);
            if active && !p[c].is_finite() {
                return Err(format!(
                    "pressure {} in active cell {c} at report {t}",
                    p[c]
                ));
            }
            if active && !(0.0..=1.0).contains(&s[c]) {
                return Err(format!(
                    "water saturation {} in active cell {c} at report {t}",
                    s[c]
                ));
            }
        }
    }
    let series = [
        ("pressure_avg", &r.pressure_avg),
        ("sw_avg", &ow.sw_avg),
        ("oil in place", &ow.oil_in_place),
        ("water in place", &ow.water_in_place),
    ];
    for (name, v) in series {
        if let Some(x) = v.iter().find(|x| !x.is_finite()) {
            return Err(format!("{name} of {x}"));
        }
    }
    if let Some(x) = ow
        .sw_avg
        .iter()
        .find(|x| !(-1e-12..=1.0 + 1e-12).contains(*x))
    {
        return Err(format!("sw_avg of {x}"));
    }
    for (w, pw) in r.wells.iter().zip(&ow.wells) {
        let all = [&w.bhp, &w.rate, &w.cumulative, &pw.oil_rate, &pw.water_rate];
        if all.iter().any(|v| v.iter().any(|x| !x.is_finite())) {
            return Err(format!(
                "a value that is not finite in the series of well {}",
                w.name
            ));
        }
    }
    Ok(())
}

#[test]
fn random_oil_water_decks_run_or_stop_with_a_message() {
    let tally = Tally::default();
    let mut runner = TestRunner::new(config(256));
    let result = runner.run(&deck(), |d| {
        Tally::bump(&tally.decks);
        let text = d.render();
        let a = analyze(&text);
        tally.skipped(&a);
        let Some(case) = a.runnable_case() else {
            return Ok(());
        };
        run_and_check(case, &text, &tally)
    });
    tally.report("random oil-water decks");
    if let Err(e) = result {
        panic!("{e}");
    }
    let (decks, clean) = (tally.decks.get(), tally.clean.get());
    assert!(
        2 * clean >= decks,
        "only {clean} of {decks} random decks checked clean: the property would test little"
    );
}

// ---------------------------------------------------------------------------
// Mutated decks

/// A timeline of a few days, for the fixtures and for mutated decks whose
/// own timeline grew.
const SHORT_TIMELINE: &str =
    "timeline {\n  end = 10 day\n  report_every = 2 day\n  max_steps = 500\n}";
/// The example's timeline shortened, with its change of control kept.
const BRACKENLOW_TIMELINE: &str = "timeline {\n  end = 10 day\n  report_every = 2 day\n  max_steps = 500\n  at 4 day {\n    well \"BW-1\" { control = liquid_rate 1500 stb/day }\n  }\n}";
/// The longest run a mutated deck keeps its own timeline for, s.
const LONGEST_END: f64 = 30.0 * 86400.0;
/// The most steps a mutated deck keeps its own timeline for (a hard case
/// stops at them with its error instead of taking minutes).
const MOST_STEPS: usize = 500;

/// `text` with its top-level `timeline` block replaced by `block`; `None`
/// when no such block is found.
fn with_timeline(text: &str, block: &str) -> Option<String> {
    let start = text
        .match_indices("timeline")
        .map(|(i, _)| i)
        .find(|&i| i == 0 || text[..i].ends_with('\n'))?;
    let open = start + text[start..].find('{')?;
    let mut depth = 0usize;
    for (k, ch) in text[open..].char_indices() {
        match ch {
            '{' => depth += 1,
            '}' => {
                depth -= 1;
                if depth == 0 {
                    let end = open + k + 1;
                    return Some(format!("{}{block}{}", &text[..start], &text[end..]));
                }
            }
            _ => {}
        }
    }
    None
}

/// The oil-water decks of examples/ and of the fixtures of the oil-water
/// codes, with their timelines shortened, and the files beside each.
fn oil_water_decks() -> Vec<(PathBuf, String, MemorySource)> {
    let mut out = Vec::new();
    let mut add = |path: PathBuf, timeline: &str| {
        let text = std::fs::read_to_string(&path).unwrap();
        let text = with_timeline(&text, timeline).expect("a timeline block");
        let mut source = MemorySource::new();
        for e in std::fs::read_dir(path.parent().unwrap()).unwrap().flatten() {
            if e.path().is_file() {
                source.insert(e.path(), std::fs::read(e.path()).unwrap());
            }
        }
        out.push((path, text, source));
    };
    add(
        root().join("examples/brackenlow-waterflood.rill"),
        BRACKENLOW_TIMELINE,
    );
    for code in [
        "deck.phases",
        "relperm.endpoints",
        "relperm.shape",
        "well.control-phase",
        "initial.contact",
        "sanity.mobility",
    ] {
        add(
            root().join("tests/fixtures").join(code).join("clean.rill"),
            SHORT_TIMELINE,
        );
    }
    out
}

/// A number of the deck replaced by an edge value: most such decks still
/// check clean, so the engine sees zeros, ones, tiny and huge values in
/// every key the checker lets through.
#[derive(Debug, Clone)]
struct NumberEdit {
    /// Which number literal, modulo their count.
    pick: usize,
    /// The new value: a fixed edge value or a factor on the old one.
    value: EdgeValue,
}

#[derive(Debug, Clone)]
enum EdgeValue {
    Fixed(&'static str),
    Times(f64),
}

fn number_edit() -> impl Strategy<Value = NumberEdit> {
    let value = prop_oneof![
        prop::sample::select(vec!["0", "1", "0.5", "0.999", "1e-6", "1e6", "2"])
            .prop_map(EdgeValue::Fixed),
        prop_oneof![log_range(1e-3, 1.0), log_range(1.0, 1e3)].prop_map(EdgeValue::Times),
    ];
    (any::<usize>(), value).prop_map(|(pick, value)| NumberEdit { pick, value })
}

/// The byte ranges of the number literals of `text` outside strings and
/// comments (digits with `.`, `e`, `-` inside, not glued to a word).
fn numbers(text: &str) -> Vec<std::ops::Range<usize>> {
    let b = text.as_bytes();
    let mut out = Vec::new();
    let (mut i, mut quoted, mut comment) = (0, false, false);
    while i < b.len() {
        let c = b[i];
        match c {
            b'\n' => comment = false,
            b'#' if !quoted => comment = true,
            b'"' if !comment => quoted = !quoted,
            _ => {}
        }
        let glued = i > 0 && (b[i - 1].is_ascii_alphanumeric() || b[i - 1] == b'_');
        if c.is_ascii_digit() && !quoted && !comment && !glued {
            let start = i;
            while i < b.len()
                && (b[i].is_ascii_digit()
                    || b[i] == b'.' && b.get(i + 1) != Some(&b'.')
                    || (b[i] == b'e' || b[i] == b'E')
                        && b.get(i + 1)
                            .is_some_and(|n| n.is_ascii_digit() || *n == b'-'))
            {
                i += if b[i] == b'e' || b[i] == b'E' { 2 } else { 1 };
            }
            out.push(start..i.min(b.len()));
            continue;
        }
        i += 1;
    }
    out
}

impl NumberEdit {
    fn apply(&self, text: &str) -> String {
        let found = numbers(text);
        if found.is_empty() {
            return text.to_string();
        }
        let r = found[self.pick % found.len()].clone();
        let new = match self.value {
            EdgeValue::Fixed(v) => v.to_string(),
            EdgeValue::Times(f) => match text[r.clone()].parse::<f64>() {
                Ok(old) => format!("{}", round(old * f, 6)),
                Err(_) => return text.to_string(),
            },
        };
        format!("{}{new}{}", &text[..r.start], &text[r.end..])
    }
}

/// An edit of either kind.
#[derive(Debug, Clone)]
enum Edit {
    Text(mutation::Mutation),
    Number(NumberEdit),
}

#[test]
fn numbers_are_found_outside_strings_comments_and_names() {
    let text = "well \"BW-1\" {\n  dz = layers [12 1.5e-6] ft # 7 ft\n  i = 2..14\n}\n";
    let found: Vec<&str> = numbers(text).into_iter().map(|r| &text[r]).collect();
    assert_eq!(found, ["12", "1.5e-6", "2", "14"]);
}

#[test]
fn the_shortened_oil_water_decks_check_clean_and_run() {
    let tally = Tally::default();
    for (path, text, source) in oil_water_decks() {
        let a = analyze_text(&path, &text, &source);
        let errors: Vec<_> = a
            .diagnostics
            .iter()
            .filter(|d| d.severity == Severity::Error)
            .collect();
        assert!(errors.is_empty(), "{}: {errors:?}", path.display());
        let case = a.runnable_case().unwrap();
        assert!(
            case.oil_water.is_some(),
            "{} is not an oil-water deck",
            path.display()
        );
        if let Err(e) = run_and_check(case, &text, &tally) {
            panic!("{}: {e}", path.display());
        }
    }
    assert_eq!(tally.ok.get(), 7, "every shortened deck runs to its end");
}

#[test]
fn mutated_oil_water_decks_run_or_stop_with_a_message() {
    let decks = oil_water_decks();
    let tally = Tally::default();
    let mut runner = TestRunner::new(config(256));
    // The checker's edits break most decks; edits of numbers mostly keep
    // them runnable. A mix reaches both the checker's refusals and the
    // engine.
    let edit = prop_oneof![
        1 => mutation::mutation().prop_map(Edit::Text),
        4 => number_edit().prop_map(Edit::Number),
    ];
    let strategy = (any::<usize>(), prop::collection::vec(edit, 1..4));
    let result = runner.run(&strategy, |(pick, edits)| {
        Tally::bump(&tally.decks);
        let (path, text, source) = &decks[pick % decks.len()];
        let mut t = text.clone();
        for e in &edits {
            t = match e {
                Edit::Text(m) => mutation::apply(&t, m),
                Edit::Number(n) => n.apply(&t),
            };
        }
        let checked = catch_unwind(AssertUnwindSafe(|| analyze_text(path, &t, source)));
        let Ok(mut a) = checked else {
            return Err(TestCaseError::fail(format!(
                "the checker panicked\n--- deck ---\n{t}"
            )));
        };
        let long = |c: &Case| c.timeline.end > LONGEST_END || c.timeline.max_steps > MOST_STEPS;
        if a.runnable_case().is_some_and(long) {
            // A mutation lengthened the run or lifted its step guard: run
            // a few days of it, at most `MOST_STEPS` steps.
            let Some(short) = with_timeline(&t, SHORT_TIMELINE) else {
                return Ok(());
            };
            t = short;
            a = analyze_text(path, &t, source);
        }
        tally.skipped(&a);
        let Some(case) = a.runnable_case() else {
            return Ok(());
        };
        run_and_check(case, &t, &tally)
    });
    tally.report("mutated oil-water decks");
    if let Err(e) = result {
        panic!("{e}");
    }
    let (decks, clean) = (tally.decks.get(), tally.clean.get());
    assert!(
        10 * clean >= decks,
        "only {clean} of {decks} mutated decks checked clean: the property would test little"
    );
}
