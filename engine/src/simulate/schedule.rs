//! The schedule of inputs during a run: planned events in time order, the
//! streams running now with their end times, and the check times.

use crate::model::Inputs;
use crate::plan::{Action, Event, Plan, Stream};
use crate::trajectory::StreamTotal;
use std::sync::Arc;

/// A running stream with its end time.
#[derive(Debug, Clone, PartialEq)]
struct Running {
    stream: Stream,
    end_h: f64,
}

/// The schedule of inputs: planned events, running streams, check times.
#[derive(Debug, Clone)]
pub(super) struct Schedule {
    pub(super) events: Vec<Event>,
    next_event: usize,
    running: Vec<Running>,
    pub(super) check_every_h: Option<f64>,
    pub(super) next_check_h: f64,
    /// Labels of `running`, kept until the running streams change.
    labels: Option<Arc<[String]>>,
    /// Changes to the model asked for and not yet made.
    pub(super) model_changes: Vec<Action>,
    /// What each stream has given so far, up to `totals_until_h`.
    totals: Vec<StreamTotal>,
    totals_until_h: f64,
}

/// Most streams (infusions, drinks, losses, the habitual intake) running
/// at once. A ward runs a handful of lines at a time (common practice);
/// 1,000 is far beyond any protocol and bounds what each step of the
/// solver sums, and the memory a runaway rule can take.
pub const MAX_RUNNING_STREAMS: usize = 1_000;

/// Two times closer than this, h, are the same moment.
pub(super) const EPS_H: f64 = 1e-9;

impl Schedule {
    pub(super) fn new(plan: &Plan) -> Self {
        let mut events = plan.events.clone();
        events.sort_by(|a, b| a.time_h.total_cmp(&b.time_h));
        Schedule {
            events,
            next_event: 0,
            running: Vec::new(),
            check_every_h: plan.check_every_h,
            next_check_h: if plan.check_every_h.is_some() {
                0.0
            } else {
                f64::INFINITY
            },
            labels: None,
            model_changes: Vec::new(),
            totals: Vec::new(),
            totals_until_h: 0.0,
        }
    }

    pub(super) fn apply(&mut self, t: f64, action: Action) {
        if action.changes_the_model() {
            self.model_changes.push(action);
            return;
        }
        self.labels = None;
        match action {
            Action::Start(stream) => {
                let end_h = stream.duration_h.map_or(f64::INFINITY, |d| t + d);
                self.running.push(Running { stream, end_h });
            }
            Action::Stop(label) => self.running.retain(|r| r.stream.label != label),
            Action::StopAll => self.running.clear(),
            Action::SetParam { .. } | Action::ResolveCause => {}
        }
    }

    /// Count what the running streams gave from the last count to `t`
    /// (their rates are constant in between: every change passes here).
    fn count_until(&mut self, t: f64) {
        let from = self.totals_until_h;
        if t <= from {
            return;
        }
        for r in &self.running {
            let hours = r.end_h.min(t) - from;
            if hours <= 0.0 {
                continue;
            }
            let i = match self.totals.iter().position(|s| s.label == r.stream.label) {
                Some(i) => i,
                None => {
                    self.totals.push(StreamTotal {
                        label: r.stream.label.clone(),
                        ..Default::default()
                    });
                    self.totals.len() - 1
                }
            };
            self.totals[i].add(&r.stream.rates, hours);
        }
        self.totals_until_h = t;
    }

    /// What each stream gave up to `t` (the end of the run).
    pub(super) fn totals_to(&mut self, t: f64) -> Vec<StreamTotal> {
        self.count_until(t);
        self.totals.clone()
    }

    /// Apply everything due at time `t`; returns whether a check is due.
    pub(super) fn advance_to(&mut self, t: f64) -> bool {
        self.count_until(t);
        let before = self.running.len();
        self.running.retain(|r| r.end_h > t + EPS_H);
        if self.running.len() != before {
            self.labels = None;
        }
        while self.next_event < self.events.len()
            && self.events[self.next_event].time_h <= t + EPS_H
        {
            let a = self.events[self.next_event].action.clone();
            self.apply(t, a);
            self.next_event += 1;
        }
        if (self.next_check_h - t).abs() <= EPS_H {
            if let Some(dt) = self.check_every_h {
                self.next_check_h += dt;
            }
            return true;
        }
        false
    }

    /// The next time the solver must stop exactly: an event, the end of a
    /// stream or the end of the run (checks are handled without stopping).
    pub(super) fn next_hard_break(&self, t: f64, end: f64) -> f64 {
        let mut next = end;
        if let Some(e) = self.events.get(self.next_event) {
            next = next.min(e.time_h);
        }
        for r in &self.running {
            next = next.min(r.end_h);
        }
        next.max(t)
    }

    /// How many streams are running.
    pub(super) fn running_count(&self) -> usize {
        self.running.len()
    }

    /// Give the running streams with this label new rates.
    pub(super) fn set_rates(&mut self, label: &str, rates: Inputs) {
        for r in self.running.iter_mut().filter(|r| r.stream.label == label) {
            r.stream.rates = rates;
        }
    }

    pub(super) fn inputs(&self) -> Inputs {
        self.running
            .iter()
            .fold(Inputs::default(), |acc, r| acc.plus(&r.stream.rates))
    }

    pub(super) fn labels(&mut self) -> Arc<[String]> {
        self.labels
            .get_or_insert_with(|| {
                self.running
                    .iter()
                    .map(|r| r.stream.label.clone())
                    .collect()
            })
            .clone()
    }
}
