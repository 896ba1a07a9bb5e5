//! The equilibration evidence of a run: for each followed quantity its statistics after one
//! common start, a verdict per quantity and overall.
//!
//! Each quantity's start is detected on its own ([`detect_start_bounded`]); the averages are
//! then all taken from the latest start among the quantities that relax
//! ([`Quantity::relaxes`]), so every row of the table describes the same stretch of the run,
//! or from a start the user sets.

use super::quantity::Quantity;
use super::sample_store::SampleStore;
use super::series_statistics::{
    DetectedStart, SeriesStatistics, detect_start_bounded, statistics_with_scratch,
};
use super::suffix::RunningSums;
use serde::{Deserialize, Serialize};

/// Fewer independent samples than this after the start: too few to decide (common practice:
/// the relative error of a standard error from n_eff samples is about 1/√(2 n_eff), 16 % at
/// 20).
pub const MIN_EFFECTIVE_SAMPLES: f64 = 20.0;
/// A detected start later than this fraction of the run is not taken as an answer: on runs
/// only a few tens of correlation times long the detection picks late, unstable starts.
pub const LATE_START_FRACTION: f64 = 0.5;
/// Fewer samples than this after the start: nothing is decided.
pub const MIN_SAMPLES: usize = 30;

/// Where averages start.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
pub enum StartChoice {
    /// The latest of the detected starts of the relaxing quantities.
    #[default]
    Automatic,
    /// From this time (τ) on, set by the user.
    FromTime(f64),
}

/// Why a quantity is not yet called equilibrated.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum NotYetReason {
    /// Fewer than [`MIN_SAMPLES`] samples after the start.
    FewSamples { samples: usize },
    /// The start lies late in the run (fraction of the run before it).
    LateStart { fraction: f64 },
    /// Fewer than [`MIN_EFFECTIVE_SAMPLES`] independent samples after the start.
    FewIndependent { effective: f64 },
}

/// The verdict on a quantity, or on the run.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum Verdict {
    NotYet(NotYetReason),
    /// The means of the first and last thirds after the start differ by more than 3 combined
    /// standard errors.
    StillDrifting,
    /// Equilibrated from `from_time` (τ) with `effective` independent samples.
    Equilibrated {
        from_time: f64,
        effective: f64,
    },
}

impl Verdict {
    /// The verdict in words (never colour alone); `time` writes a time in τ as the caller shows
    /// times (with its unit).
    pub fn words(&self, time: impl Fn(f64) -> String) -> String {
        match self {
            Verdict::NotYet(NotYetReason::FewSamples { samples }) => {
                format!("not yet equilibrated: only {samples} samples after the start")
            }
            Verdict::NotYet(NotYetReason::LateStart { fraction }) => format!(
                "not yet equilibrated: the start found lies {:.0} % into the run, too few independent samples to decide",
                fraction * 100.0
            ),
            Verdict::NotYet(NotYetReason::FewIndependent { effective }) => format!(
                "not yet equilibrated: {effective:.0} independent samples after the start, {MIN_EFFECTIVE_SAMPLES:.0} needed"
            ),
            Verdict::StillDrifting => "still drifting: first and last thirds disagree".into(),
            Verdict::Equilibrated { from_time, effective } => format!(
                "equilibrated from t = {} with {effective:.0} independent samples",
                time(*from_time)
            ),
        }
    }

    /// A one- or two-word form for narrow table cells.
    pub fn short(&self) -> &'static str {
        match self {
            Verdict::NotYet(_) => "not yet",
            Verdict::StillDrifting => "drifting",
            Verdict::Equilibrated { .. } => "equilibrated",
        }
    }

    /// True for [`Verdict::Equilibrated`].
    pub fn is_equilibrated(&self) -> bool {
        matches!(self, Verdict::Equilibrated { .. })
    }

    /// Order of badness: equilibrated 0, drifting 1, not yet 2.
    fn rank(&self) -> u8 {
        match self {
            Verdict::Equilibrated { .. } => 0,
            Verdict::StillDrifting => 1,
            Verdict::NotYet(_) => 2,
        }
    }
}

/// One row of the evidence.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct QuantityEvidence {
    pub quantity: Quantity,
    /// This quantity's own detected start (entry index and step), for the quantities that
    /// decide the verdict.
    pub detected: Option<DetectedStart>,
    pub detected_step: Option<u64>,
    /// Statistics from the common start; `inefficiency` in stored entries (see
    /// [`QuantityEvidence::inefficiency_in_samples`]).
    pub stats: SeriesStatistics,
    pub verdict: Verdict,
    /// Whether this quantity takes part in the overall verdict.
    pub decides: bool,
}

impl QuantityEvidence {
    /// The statistical inefficiency in raw samples (entries are `width` samples each).
    pub fn inefficiency_in_samples(&self, width: u64) -> f64 {
        self.stats.inefficiency * width as f64
    }

    /// True when the stationarity check calls this quantity drifting.
    pub fn drifting(&self) -> bool {
        self.stats.thirds.is_some_and(|t| t.drifting)
    }
}

/// The equilibration evidence of a run so far.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Evidence {
    pub choice: StartChoice,
    /// The common start: entry index, step and time.
    pub start_index: usize,
    pub start_step: u64,
    pub start_time: f64,
    /// Entries analysed and raw samples per entry.
    pub entries: usize,
    pub width: u64,
    pub rows: Vec<QuantityEvidence>,
    pub overall: Verdict,
}

impl Evidence {
    /// The row of `q`.
    pub fn row(&self, q: Quantity) -> &QuantityEvidence {
        &self.rows[q.index()]
    }
}

fn verdict_of(stats: &SeriesStatistics, start_fraction: f64, automatic: bool, from_time: f64) -> Verdict {
    if stats.samples < MIN_SAMPLES {
        return Verdict::NotYet(NotYetReason::FewSamples {
            samples: stats.samples,
        });
    }
    if automatic && start_fraction > LATE_START_FRACTION {
        return Verdict::NotYet(NotYetReason::LateStart {
            fraction: start_fraction,
        });
    }
    // A drift is named before the shortage of independent samples it causes (a trend makes g
    // large): "still drifting" says what to do, wait.
    if stats.thirds.is_some_and(|t| t.drifting) {
        return Verdict::StillDrifting;
    }
    if stats.effective_samples < MIN_EFFECTIVE_SAMPLES {
        return Verdict::NotYet(NotYetReason::FewIndependent {
            effective: stats.effective_samples,
        });
    }
    Verdict::Equilibrated {
        from_time,
        effective: stats.effective_samples,
    }
}

/// Analyses the store: detection per quantity, statistics from the common start, verdicts.
/// `thermostatted` says whether a bath holds the temperature (see [`Quantity::relaxes`]).
pub fn analyse(store: &SampleStore, choice: StartChoice, thermostatted: bool) -> Evidence {
    let n = store.len();
    let sums: Vec<RunningSums> = Quantity::ALL.iter().map(|&q| store.sums(q)).collect();
    // Only the quantities that decide need a start of their own; the others are read from the
    // common start.
    let detected: Vec<Option<DetectedStart>> = Quantity::ALL
        .iter()
        .map(|&q| {
            q.relaxes(thermostatted)
                .then(|| detect_start_bounded(store.values(q), &sums[q.index()]))
        })
        .collect();
    let start_index = match choice {
        StartChoice::Automatic => Quantity::ALL
            .iter()
            .filter_map(|q| detected[q.index()].map(|d| d.index))
            .max()
            .unwrap_or(0),
        StartChoice::FromTime(t) => store.index_at_time(t),
    }
    .min(n);
    let start_step = store.steps().get(start_index).copied().unwrap_or(0);
    let start_time = store.times().get(start_index).copied().unwrap_or(f64::NAN);
    let fraction = if n > 0 { start_index as f64 / n as f64 } else { 0.0 };
    let automatic = choice == StartChoice::Automatic;
    let mut scratch = Vec::new();
    let rows: Vec<QuantityEvidence> = Quantity::ALL
        .iter()
        .map(|&q| {
            let stats = statistics_with_scratch(store.values(q), &sums[q.index()], start_index, &mut scratch);
            let verdict = verdict_of(&stats, fraction, automatic, start_time);
            let d = detected[q.index()];
            QuantityEvidence {
                quantity: q,
                detected: d,
                detected_step: d.and_then(|d| store.steps().get(d.index).copied()),
                stats,
                verdict,
                decides: q.relaxes(thermostatted),
            }
        })
        .collect();
    let overall = rows
        .iter()
        .filter(|r| r.decides)
        .map(|r| r.verdict)
        .fold(None::<Verdict>, |worst, v| match (worst, v) {
            (None, v) => Some(v),
            (Some(w), v) if v.rank() > w.rank() => Some(v),
            (
                Some(Verdict::Equilibrated {
                    from_time,
                    effective: a,
                }),
                Verdict::Equilibrated { effective: b, .. },
            ) => Some(Verdict::Equilibrated {
                from_time,
                effective: a.min(b),
            }),
            (w, _) => w,
        })
        .unwrap_or(Verdict::NotYet(NotYetReason::FewSamples { samples: n }));
    Evidence {
        choice,
        start_index,
        start_step,
        start_time,
        entries: n,
        width: store.width(),
        rows,
        overall,
    }
}
