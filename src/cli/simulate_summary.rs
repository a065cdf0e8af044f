//! The metadata sidecar of `pathsieve simulate`, which is also its `--json` summary: units,
//! grid, frame, seed, noise, phase errors, the backgrounds added, the signal terms, and per
//! output its kept terms, classes, peaks and leak figures.

use pathsieve::model::{Experiment, PathwayClass};
use pathsieve::signature::Signature;
use pathsieve::simulate::run::CycleRun;
use pathsieve::simulate::{
    DelayGrid, Dynamics, EnergyUnit, ExcitationAxis, PhaseErrors, Response, SimulatedBackground,
    StepSeries,
};
use serde::Serialize;
use std::path::Path;

/// Version of the simulate metadata layout.
pub const SCHEMA_VERSION: u32 = 1;

/// One delay axis in the summary.
#[derive(Serialize)]
pub struct AxisSummary {
    pub(super) name: String,
    pub(super) points: usize,
    pub(super) first_fs: f64,
    pub(super) last_fs: f64,
    pub(super) step_fs: Option<f64>,
}

/// One output in the summary.
#[derive(Serialize)]
pub struct OutputSummary {
    pub(super) name: String,
    pub(super) kept: Vec<Signature>,
    pub(super) classes: Vec<&'static str>,
    pub(super) excitation_axis: ExcitationAxis,
    pub(super) picture: &'static str,
    pub(super) real: bool,
    pub(super) ideal_peak: f64,
    pub(super) leak_peak: Option<f64>,
    pub(super) leak_relative: Option<f64>,
    /// Largest modulus inside the picture's window.
    pub(super) spectrum_ideal_peak: Option<f64>,
    pub(super) spectrum_leak_peak: Option<f64>,
    pub(super) spectrum_leak_relative: Option<f64>,
    pub(super) stored_as: Vec<String>,
}

/// One signal term in the summary.
#[derive(Serialize)]
pub struct TermSummary {
    pub(super) signature: Signature,
    pub(super) classes: Vec<&'static str>,
    pub(super) pathways: usize,
}

/// The metadata sidecar and `--json` summary.
#[derive(Serialize)]
pub struct Summary {
    pub(super) schema_version: u32,
    pub(super) tool: &'static str,
    pub(super) version: &'static str,
    pub(super) content: &'static str,
    pub(super) model: &'static str,
    pub(super) experiment: String,
    experiment_sha256: String,
    pub(super) cycle: Option<String>,
    pub(super) cycle_clean: Option<bool>,
    pub(super) fields: Vec<String>,
    pub(super) delay_unit: &'static str,
    pub(super) energy_unit: &'static str,
    pub(super) axis_unit: &'static str,
    pub(super) frame: f64,
    pub(super) undersample: bool,
    pub(super) grid: Vec<AxisSummary>,
    pub(super) spectrum_at_fs: Vec<(String, f64)>,
    /// The frequency window of the pictures, in the axis unit.
    pub(super) window: Option<[f64; 2]>,
    pub(super) seed: u64,
    pub(super) noise: f64,
    pub(super) phase_errors_turns: PhaseErrors,
    pub(super) reference_amplitude: Option<f64>,
    pub(super) backgrounds: Vec<SimulatedBackground>,
    pub(super) step_order: Option<&'static str>,
    pub(super) steps_shape: Option<Vec<usize>>,
    pub(super) signal_terms: Vec<TermSummary>,
    pub(super) not_phase_matched: Vec<Signature>,
    pub(super) outputs: Vec<OutputSummary>,
    pub(super) files: Vec<String>,
    /// Sentences for people.
    pub(super) notes: Vec<String>,
    /// The per-step data (written, not serialised).
    #[serde(skip)]
    pub(super) steps: Option<StepSeries>,
}

/// A path's file name (the whole path when it has none).
pub(super) fn name_of(p: &Path) -> String {
    p.file_name().map_or_else(
        || p.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    )
}

/// What the summary starts from.
pub struct Setup<'a> {
    pub(super) experiment: &'a Path,
    pub(super) cycle: Option<&'a Path>,
    pub(super) exp: &'a Experiment,
    pub(super) dyn_: &'a Dynamics,
    pub(super) grid: &'a DelayGrid,
    pub(super) unit: EnergyUnit,
    pub(super) frame: f64,
    pub(super) undersample: bool,
    pub(super) seed: u64,
    pub(super) noise: f64,
    pub(super) errors: &'a PhaseErrors,
    pub(super) resp: &'a Response,
}

impl Summary {
    /// The summary before the run.
    pub fn new(s: &Setup) -> anyhow::Result<Summary> {
        let bytes = pathsieve::input_text::read_bytes(s.experiment)?;
        let classes = |c: &[PathwayClass]| c.iter().map(|x| x.short()).collect::<Vec<_>>();
        let notes = vec![format!(
            "delays in fs; frame {} {} per quantum ({}); the spectrum axes are in {}",
            s.frame,
            s.dyn_.energy_unit.label(),
            if s.frame == 0.0 {
                "lab frame"
            } else {
                "rotating frame: see docs/simulate.md for its sign"
            },
            s.unit.label()
        )];
        Ok(Summary {
            schema_version: SCHEMA_VERSION,
            tool: "pathsieve",
            version: env!("CARGO_PKG_VERSION"),
            content: if s.cycle.is_some() { "simulated acquisition of a phase cycle" } else { "simulated ideal kept signals" },
            model: "impulsive limit, rotating-wave approximation, response functions per pathway (Mukamel 1995, ch. 6)",
            experiment: name_of(s.experiment),
            experiment_sha256: pathsieve::export::meta::sha256_hex(&bytes),
            cycle: s.cycle.map(name_of),
            cycle_clean: None,
            fields: s.exp.field_names(),
            delay_unit: "fs",
            energy_unit: s.dyn_.energy_unit.label(),
            axis_unit: s.unit.label(),
            frame: s.frame,
            undersample: s.undersample,
            grid: s
                .grid
                .axes
                .iter()
                .map(|a| AxisSummary {
                    name: a.name.clone(),
                    points: a.times_fs.len(),
                    first_fs: a.times_fs.first().copied().unwrap_or(0.0),
                    last_fs: a.times_fs.last().copied().unwrap_or(0.0),
                    step_fs: a.step(),
                })
                .collect(),
            spectrum_at_fs: Vec::new(),
            window: None,
            seed: s.seed,
            noise: s.noise,
            phase_errors_turns: s.errors.clone(),
            reference_amplitude: None,
            backgrounds: Vec::new(),
            step_order: None,
            steps_shape: None,
            signal_terms: s
                .resp
                .terms
                .iter()
                .map(|t| TermSummary {
                    signature: t.signature.clone(),
                    classes: classes(&t.classes),
                    pathways: t.pathways,
                })
                .collect(),
            not_phase_matched: s.resp.unmatched.clone(),
            outputs: Vec::new(),
            files: Vec::new(),
            notes,
            steps: None,
        })
    }

    /// Record a cycle run.
    pub fn set_run(&mut self, run: &CycleRun, clean: bool) {
        self.cycle_clean = Some(clean);
        self.reference_amplitude = Some(run.reference);
        self.backgrounds = run.backgrounds.clone();
        self.step_order = Some("designed (the cycle file's order)");
        self.steps_shape = Some(run.steps.shape.clone());
    }

    /// Record the middle delays of the spectra.
    pub fn set_spectrum_at(&mut self, grid: &DelayGrid, fixed: &[usize], window: [f64; 2]) {
        self.window = Some(window);
        let n = grid.axes.len();
        self.spectrum_at_fs = (1..n - 1)
            .map(|k| {
                (
                    grid.axes[k].name.clone(),
                    grid.axes[k].times_fs[fixed[k - 1]],
                )
            })
            .collect();
    }

    /// Pretty JSON bytes with a trailing newline.
    pub fn json_bytes(&self) -> Vec<u8> {
        let mut s = serde_json::to_string_pretty(self).unwrap_or_else(|_| "{}".into());
        s.push('\n');
        s.into_bytes()
    }
}
