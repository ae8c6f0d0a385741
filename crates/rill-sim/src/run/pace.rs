//! The step guard of a transient run: at most `max_steps` steps, and an
//! early stop when the pace of the last steps shows the run could not
//! finish within ten times that many. Without it a case whose steps
//! collapse (an absurd viscosity, a rate no rock can deliver) creeps on for
//! hours with nothing to show. The shortest step a cut may leave,
//! `min_step`, is enforced where steps are cut (`transient`).

use std::collections::VecDeque;

use rill_model::Timeline;

use super::RunError;

/// Steps over which the pace is measured before a projection is trusted.
const WINDOW: usize = 1000;
/// A projection this many times `max_steps` stops the run at once; below
/// it the run goes on to `max_steps` (steps may grow again after a hard
/// period, so a projection near the limit is not yet proof).
const PROJECTION_FACTOR: f64 = 10.0;

/// Counts the steps and watches their pace.
pub(crate) struct Pace {
    max_steps: usize,
    end: f64,
    /// The times reached by the last `WINDOW` steps, oldest first.
    recent: VecDeque<f64>,
}

impl Pace {
    pub(crate) fn new(timeline: &Timeline) -> Pace {
        Pace {
            max_steps: timeline.max_steps,
            end: timeline.end,
            recent: VecDeque::with_capacity(WINDOW + 1),
        }
    }

    /// After step `step` (counting from 1) reached time `t`, s: `Err` when
    /// the run has used its steps before the end, or when at the pace of
    /// the last `WINDOW` steps it would need more than `PROJECTION_FACTOR`
    /// times `max_steps`.
    pub(crate) fn check(&mut self, step: usize, t: f64) -> Result<(), RunError> {
        self.recent.push_back(t);
        if self.recent.len() > WINDOW + 1 {
            self.recent.pop_front();
        }
        let remaining = self.end - t;
        if remaining <= 1e-9 * self.end.max(1.0) {
            return Ok(());
        }
        let projected = self.projected_steps(step, remaining);
        let over_projection =
            projected.is_some_and(|p| p > PROJECTION_FACTOR * self.max_steps as f64);
        if step >= self.max_steps || over_projection {
            return Err(RunError::TooManySteps {
                steps: step,
                time: t,
                end: self.end,
                max_steps: self.max_steps,
                projected: projected.map(|p| p.min(u64::MAX as f64) as u64),
            });
        }
        Ok(())
    }

    /// Steps the whole run would take at the pace of the last `WINDOW`
    /// steps; `None` before there are that many.
    fn projected_steps(&self, step: usize, remaining: f64) -> Option<f64> {
        if self.recent.len() <= WINDOW {
            return None;
        }
        let covered = self.recent.back()? - self.recent.front()?;
        if covered <= 0.0 {
            return Some(f64::INFINITY);
        }
        Some(step as f64 + remaining / (covered / WINDOW as f64))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn timeline(end: f64, max_steps: usize) -> Timeline {
        Timeline {
            kind: rill_model::RunKind::Transient,
            end,
            first_step: 1.0,
            max_step: end,
            min_step: 1.0,
            max_steps,
            growth: 1.5,
            report_every: None,
            report_at: Vec::new(),
            events: Vec::new(),
        }
    }

    #[test]
    fn a_run_that_keeps_its_pace_within_the_count_goes_on() {
        // 5000 steps of 1 s toward an end at 6000 s, limit 6000: fine.
        let mut pace = Pace::new(&timeline(6000.0, 6000));
        for step in 1..=5000 {
            pace.check(step, step as f64).unwrap();
        }
    }

    #[test]
    fn the_count_stops_a_run_at_max_steps() {
        let mut pace = Pace::new(&timeline(1e6, 500));
        for step in 1..500 {
            pace.check(step, step as f64).unwrap();
        }
        match pace.check(500, 500.0) {
            Err(RunError::TooManySteps {
                steps: 500,
                max_steps: 500,
                ..
            }) => {}
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn a_collapsed_pace_stops_the_run_once_measured() {
        // Steps of 1 s toward 1e9 s: about 1e9 steps projected, far above
        // 10 x 100000; the stop comes right after the first full window.
        let mut pace = Pace::new(&timeline(1e9, 100_000));
        let mut stopped = None;
        for step in 1..=5000 {
            if let Err(e) = pace.check(step, step as f64) {
                stopped = Some((step, e));
                break;
            }
        }
        let (step, e) = stopped.expect("the run should stop");
        assert_eq!(step, WINDOW + 1);
        let RunError::TooManySteps { projected, .. } = e else {
            panic!("{e:?}")
        };
        let p = projected.unwrap() as f64;
        assert!((p - 1e9).abs() / 1e9 < 1e-6, "{p}");
    }

    #[test]
    fn the_last_step_reaching_the_end_is_never_refused() {
        let mut pace = Pace::new(&timeline(10.0, 10));
        for step in 1..=10 {
            pace.check(step, step as f64).unwrap();
        }
    }
}
