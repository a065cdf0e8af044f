//! Simulated signals: the response of every enumerated pathway in the impulsive limit with the
//! rotating-wave approximation (Mukamel, *Principles of Nonlinear Optical Spectroscopy*, 1995,
//! ch. 6; Hamm & Zanni, *Concepts and Methods of 2D Infrared Spectroscopy*, 2011, ch. 4), the
//! per-step data a phase cycle would record (with backgrounds, phase errors and noise), and 2D
//! spectra of the combined outputs. The dynamics come from the experiment file's optional
//! `[dynamics]` table (energies in cm^-1, eV or THz; dephasing; lifetimes; Gaussian
//! inhomogeneous width with a correlation between states).

pub mod dynamics;
pub mod dynamics_file;
pub mod grid;
pub mod measure;
pub mod response;
pub mod rng;
pub mod run;
pub mod spectrum;
#[cfg(test)]
mod tests;
pub mod units;

pub use dynamics::{transition_window, Dynamics, Propagator};
pub use dynamics_file::parse_dynamics;
pub use grid::{parse_delays, DelayAxis, DelayGrid};
pub use measure::{applied_phases, measure_steps, Background, PhaseErrors, StepSeries};
pub use response::{delay_names, simulate_response, Response, TermSignal};
pub use run::{ideal_outputs, simulate_cycle, CycleRun, RunRequest, SimulatedBackground};
pub use spectrum::{spectrum_2d, ExcitationAxis, Spectrum2D, SpectrumRequest};
pub use units::{EnergyUnit, TimeUnit};

/// Why a simulation cannot run; every message names the value and the fix.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SimulationError {
    /// The experiment is of a kind the simulator does not model.
    #[error("{0}")]
    Unsupported(String),
    /// A request value out of range or inconsistent.
    #[error("{0}")]
    BadRequest(String),
    /// A delay step too coarse for a frequency in that delay.
    #[error("delay {axis}: a step of {step_fs} fs aliases the frequency {frequency:.4} {unit} held in that delay; take a step below {max_step_fs:.4} fs, use a rotating frame (--frame), or allow it with --undersample")]
    Aliased {
        /// Delay name.
        axis: String,
        /// The step given.
        step_fs: f64,
        /// The largest step that resolves the frequency.
        max_step_fs: f64,
        /// The frequency (in the rotating frame), in `unit`.
        frequency: f64,
        /// Energy unit.
        unit: String,
    },
    /// The cycle does not fit the experiment, or the data do not fit the cycle.
    #[error(transparent)]
    Combine(#[from] crate::combine::CombineError),
    /// From the model (size limits).
    #[error(transparent)]
    Model(#[from] crate::error::ModelError),
}
