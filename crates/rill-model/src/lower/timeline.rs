use super::*;

/// How the run ends, for checking events against it.
struct RunEnd {
    kind: RunKind,
    /// The end time in seconds (0 for a steady run).
    end: f64,
    /// Where `end` is given.
    loc: Option<Location>,
}

/// The step lengths the guard is checked against, s.
struct Steps {
    first: f64,
    max: f64,
    /// `max_step` is written in the deck (not the default `end`/10).
    max_given: bool,
}

impl<'s> Lowerer<'s> {
    /// `min_step` and `max_steps` with their defaults, checked against the
    /// other step lengths and against the fewest steps the run can take
    /// (`end` / `max_step`). Errors are `timeline.steps`.
    fn lower_step_guard(
        &mut self,
        file: usize,
        block: &Block,
        run_end: &RunEnd,
        steps: &Steps,
    ) -> Option<(f64, usize)> {
        let min_stmt = find(block, "min_step");
        let min_step = match min_stmt {
            None => Timeline::DEFAULT_MIN_STEP.min(steps.first),
            Some(s) => {
                let v = self.quantity(file, s, Dim::TIME, Gauge::Refused)?;
                let at = Location::new(file, s.value.span);
                let above = if v <= 0.0 {
                    Some("`min_step` must be a positive time".to_string())
                } else if v > steps.first {
                    Some(
                        "`min_step` is longer than `first_step`: the first step could never be cut"
                            .into(),
                    )
                } else if v > steps.max {
                    Some("`min_step` is longer than `max_step`".into())
                } else {
                    None
                };
                if let Some(msg) = above {
                    self.diags
                        .push(Diagnostic::error(Code::TimelineSteps, at, msg));
                    return None;
                }
                v
            }
        };
        let max_stmt = find(block, "max_steps");
        let max_steps = match max_stmt {
            None => Timeline::DEFAULT_MAX_STEPS,
            Some(s) => {
                let v = self.number(file, s)?;
                if !(v >= 1.0 && v.fract() == 0.0 && v <= 1e12) {
                    self.diags.push(Diagnostic::error(
                        Code::DeckOutOfRange,
                        Location::new(file, s.value.span),
                        format!("`max_steps` must be a whole number from 1 to 1e12, found {v}"),
                    ));
                    return None;
                }
                v as usize
            }
        };
        if run_end.kind == RunKind::Transient && steps.max > 0.0 {
            let fewest = (run_end.end / steps.max).ceil();
            if fewest > max_steps as f64 {
                let at = max_stmt
                    .or(if steps.max_given {
                        find(block, "max_step")
                    } else {
                        None
                    })
                    .map(|s| Location::new(file, s.value.span))
                    .or(run_end.loc)
                    .unwrap_or(Location::new(file, block.name.span));
                let needed = run_end.end / max_steps as f64;
                self.diags.push(
                    Diagnostic::error(
                        Code::TimelineSteps,
                        at,
                        format!(
                            "the run needs at least {} steps (`end` / `max_step`), more than `max_steps` = {max_steps}: it would stop before the end",
                            fewest as u64
                        ),
                    )
                    .with_note(format!(
                        "raise `max_step` to {} day or more, shorten `end`, or raise `max_steps` if that many steps are meant",
                        rill_units::format_number(needed / 86400.0)
                    )),
                );
                return None;
            }
        }
        Some((min_step, max_steps))
    }

    pub(super) fn lower_timeline(
        &mut self,
        file: usize,
        block: &Block,
        wells: &[Well],
        spans: &mut Spans,
    ) -> Option<Timeline> {
        spans.timeline = Some(Location::new(file, block.name.span));
        let kind = match find(block, "kind") {
            Some(s) => match self.choice(file, s, schema::RUN_KINDS)? {
                "steady" => RunKind::Steady,
                _ => RunKind::Transient,
            },
            None => RunKind::Transient,
        };
        let time = |this: &mut Self,
                    key: &str,
                    spans_slot: &mut Option<Location>|
         -> Option<Option<f64>> {
            match find(block, key) {
                None => Some(None),
                Some(s) => {
                    *spans_slot = Some(Location::new(file, s.value.span));
                    let v = this.quantity(file, s, Dim::TIME, Gauge::Refused)?;
                    if v <= 0.0 {
                        this.diags.push(Diagnostic::error(
                            Code::TimelineOrder,
                            Location::new(file, s.value.span),
                            format!("`{key}` must be a positive time"),
                        ));
                        return None;
                    }
                    Some(Some(v))
                }
            }
        };
        let mut end_loc = None;
        let mut first_loc = None;
        let mut unused = None;
        let end = time(self, "end", &mut end_loc);
        let first_step = time(self, "first_step", &mut first_loc);
        let max_step = time(self, "max_step", &mut unused);
        let report_every = time(self, "report_every", &mut unused);
        spans.end = end_loc;
        spans.first_step = first_loc;
        let growth = match find(block, "growth") {
            Some(s) => {
                let g = self.number(file, s)?;
                if !(1.0..=10.0).contains(&g) {
                    self.diags.push(Diagnostic::error(
                        Code::DeckOutOfRange,
                        Location::new(file, s.value.span),
                        format!("`growth` must lie between 1 and 10, found {g}"),
                    ));
                    return None;
                }
                g
            }
            None => 1.5,
        };
        let (end, first_step, max_step, report_every) =
            (end?, first_step?, max_step?, report_every?);
        if kind == RunKind::Transient && end.is_none() {
            let at = Location::new(file, block.name.span);
            self.diags.push(
                Diagnostic::error(
                    Code::DeckMissingKey,
                    at,
                    "a transient run needs `end`: how long to simulate",
                )
                .with_replacement(
                    "add `end = 365 day`",
                    Location::new(file, Span::new(block.open.end, block.open.end)),
                    "\n  end = 365 day",
                ),
            );
            return None;
        }
        let end_v = end.unwrap_or(0.0);
        let first_step_v =
            first_step.unwrap_or_else(|| (0.1 * 86400.0f64).min(end_v / 10.0).max(1.0));
        let max_step_v = max_step.unwrap_or_else(|| (end_v / 10.0).max(first_step_v));
        if let (Some(fs), Some(e)) = (first_step, end) {
            if fs > e {
                self.diags.push(
                    Diagnostic::error(
                        Code::TimelineOrder,
                        first_loc.unwrap_or_default(),
                        "`first_step` is longer than the whole run (`end`)",
                    )
                    .with_label(end_loc.unwrap_or_default(), "the run ends here"),
                );
            }
        }
        let run_end = RunEnd {
            kind,
            end: end_v,
            loc: end_loc,
        };
        let steps = Steps {
            first: first_step_v,
            max: max_step_v,
            max_given: max_step.is_some(),
        };
        let (min_step, max_steps) = self.lower_step_guard(file, block, &run_end, &steps)?;
        let report_at = self.lower_report_at(file, block, &run_end)?;
        let events = self.lower_events(file, block, &run_end, wells, spans)?;
        Some(Timeline {
            kind,
            end: end_v,
            first_step: first_step_v,
            max_step: max_step_v,
            min_step,
            max_steps,
            growth,
            report_every,
            report_at,
            events,
        })
    }

    /// `report_at = [1 2 6] hr`: positive times within the run, sorted, each
    /// once. A unit after `]` applies to every item; an item may carry its
    /// own. Times after `end` are `timeline.order` errors.
    fn lower_report_at(
        &mut self,
        file: usize,
        block: &Block,
        run_end: &RunEnd,
    ) -> Option<Vec<f64>> {
        let Some(stmt) = find(block, "report_at") else {
            return Some(Vec::new());
        };
        let Some(items) = self.number_list(file, stmt, Dim::TIME, "a time, e.g. `12` or `12 hr`")
        else {
            self.diags.push(
                Diagnostic::error(
                    Code::DeckValue,
                    Location::new(file, stmt.value.span),
                    "`report_at` expects a list of times, e.g. `[1 2 6 12] hr`",
                )
                .with_note("for a uniform interval use `report_every`"),
            );
            return None;
        };
        let items = items?;
        let mut times = Vec::with_capacity(items.len());
        let mut ok = true;
        for (t, span) in items {
            let at = Location::new(file, span);
            if t <= 0.0 {
                self.diags.push(Diagnostic::error(
                    Code::TimelineOrder,
                    at,
                    "a report time must be after the start (t = 0 is always reported)",
                ));
                ok = false;
            } else if run_end.kind == RunKind::Transient && t > run_end.end * (1.0 + 1e-12) {
                let mut d = Diagnostic::error(
                    Code::TimelineOrder,
                    at,
                    "this report time is after the end of the run",
                );
                if let Some(end) = run_end.loc {
                    d = d.with_label(end, "the run ends here");
                }
                self.diags.push(d);
                ok = false;
            } else {
                times.push(t);
            }
        }
        if !ok {
            return None;
        }
        times.sort_by(f64::total_cmp);
        times.dedup();
        Some(times)
    }

    /// The `at TIME { ... }` events, in time order and within the run.
    fn lower_events(
        &mut self,
        file: usize,
        block: &Block,
        run_end: &RunEnd,
        wells: &[Well],
        spans: &mut Spans,
    ) -> Option<Vec<Event>> {
        let mut events = Vec::new();
        let mut last: Option<(f64, Location)> = None;
        let mut ok = true;
        for item in &block.items {
            let Item::Block(ev) = item else { continue };
            if ev.name.name != "at" {
                continue;
            }
            let loc = Location::new(
                file,
                ev.name
                    .span
                    .join(ev.args.first().map(|a| a.span).unwrap_or(ev.name.span)),
            );
            let t = match ev.args.as_slice() {
                [Atom {
                    kind: AtomKind::Number { value, unit, .. },
                    span,
                }] => to_si(
                    &mut self.reporter(file),
                    *value,
                    *span,
                    unit.as_ref(),
                    Dim::TIME,
                    Gauge::Refused,
                    "at",
                ),
                _ => {
                    self.diags.push(Diagnostic::error(
                        Code::DeckValue,
                        loc,
                        "an event starts with its time: `at 180 day { ... }`",
                    ));
                    None
                }
            };
            let Some(t) = t else {
                ok = false;
                continue;
            };
            if t < 0.0 {
                self.diags.push(Diagnostic::error(
                    Code::TimelineOrder,
                    loc,
                    "an event cannot come before the start of the run (time 0); the initial state already holds at 0",
                ));
                ok = false;
            }
            if let Some((prev, prev_loc)) = last {
                if t <= prev {
                    self.diags.push(
                        Diagnostic::error(
                            Code::TimelineOrder,
                            loc,
                            "events must come in time order, each later than the one before",
                        )
                        .with_label(prev_loc, "the previous event"),
                    );
                    ok = false;
                }
            }
            if run_end.kind == RunKind::Transient && t > run_end.end {
                self.diags.push(
                    Diagnostic::error(
                        Code::TimelineOrder,
                        loc,
                        "this event comes after the end of the run",
                    )
                    .with_label(run_end.loc.unwrap_or_default(), "the run ends here"),
                );
                ok = false;
            }
            last = Some((t, loc));
            let changes = self.event_changes(file, ev, events.len(), wells, spans, &mut ok);
            events.push(Event {
                time: t,
                changes,
                origin: Origin {
                    file,
                    span: loc.span(),
                },
            });
        }
        ok.then_some(events)
    }

    /// The well changes of one event (`event`: its index); clears `ok` on an error.
    fn event_changes(
        &mut self,
        file: usize,
        ev: &Block,
        event: usize,
        wells: &[Well],
        spans: &mut Spans,
        ok: &mut bool,
    ) -> Vec<WellChange> {
        let mut changes = Vec::new();
        for inner in &ev.items {
            let Item::Block(wb) = inner else { continue };
            if wb.name.name != "well" {
                continue;
            }
            let Some(wname) = label_of(wb) else {
                self.diags.push(Diagnostic::error(
                    Code::DeckMissingKey,
                    Location::new(file, wb.name.span),
                    "a change in an event names its well: well \"NAME\" { control = ... }",
                ));
                *ok = false;
                continue;
            };
            let Some(index) = wells.iter().position(|w| w.name == wname) else {
                *ok = false;
                if self.written_wells.contains(&wname) {
                    continue; // the well block has its own error
                }
                let span = wb.args.first().map(|a| a.span).unwrap_or(wb.name.span);
                let mut d = Diagnostic::error(
                    Code::DeckReference,
                    Location::new(file, span),
                    format!("no well is named \"{wname}\""),
                );
                if let Some(near) = schema::nearest(&wname, wells.iter().map(|w| w.name.as_str())) {
                    d = d.with_replacement(
                        format!("replace by \"{near}\""),
                        Location::new(file, span),
                        format!("\"{near}\""),
                    );
                }
                self.diags.push(d);
                *ok = false;
                continue;
            };
            let control = match find(wb, "control") {
                Some(s) => {
                    if let Some(slot) = spans.wells.get_mut(index) {
                        slot.event_controls
                            .push((event, Location::new(file, s.value.span)));
                    }
                    let role = Some(wells[index].role);
                    match self
                        .control(file, s)
                        .filter(|c| self.control_fits(file, s, *c, role))
                    {
                        Some(c) => Some(c),
                        None => {
                            *ok = false;
                            None
                        }
                    }
                }
                None => None,
            };
            let bhp_limit = match find(wb, "bhp_limit") {
                Some(s) => {
                    if let Some(slot) = spans.wells.get_mut(index) {
                        slot.event_limits
                            .push((event, Location::new(file, s.value.span)));
                    }
                    let limit = self.quantity(file, s, Dim::PRESSURE, Gauge::Allowed);
                    if limit.is_none() {
                        *ok = false;
                    }
                    limit
                }
                None => None,
            };
            let skin = match find(wb, "skin") {
                Some(s) => {
                    if let Some(slot) = spans.wells.get_mut(index) {
                        slot.event_skins
                            .push((event, Location::new(file, s.value.span)));
                    }
                    let skin = self.number(file, s);
                    if skin.is_none() {
                        *ok = false;
                    }
                    skin
                }
                None => None,
            };
            changes.push(WellChange {
                well: index,
                control,
                bhp_limit,
                skin,
            });
        }
        changes
    }
}
