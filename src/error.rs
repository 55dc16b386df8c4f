//! Error types shared by the pipeline: input errors (configuration, options) and numerical
//! failures (an integral or a root that did not converge). Context and exit codes are added only
//! in `main.rs`.

use thiserror::Error;

/// A user-input problem: the message names the file or option, the key and what is allowed.
#[derive(Debug, Clone, Error, PartialEq)]
#[error("{0}")]
pub struct InputError(pub String);

impl InputError {
    pub fn new(msg: impl Into<String>) -> Self {
        InputError(msg.into())
    }
}

/// Why a numerical procedure stopped without a trustworthy number.
#[derive(Debug, Clone, Error, PartialEq)]
pub enum NumericalError {
    #[error("{what}: not converged after {iterations} steps (last change {last_change:.3e}, target {target:.3e})")]
    NotConverged {
        what: String,
        iterations: usize,
        last_change: f64,
        target: f64,
    },
    #[error("{what}: no sign change found in [{lo:.6e}, {hi:.6e}]")]
    NotBracketed { what: String, lo: f64, hi: f64 },
    #[error("{0}")]
    Invalid(String),
    /// A search stopped because the model could not be built at a point it tried (an input
    /// error, handed back as such by the search's caller).
    #[error("{what}: stopped at {at}: {reason}")]
    Stopped {
        what: String,
        at: f64,
        reason: InputError,
    },
    /// The model with every offset shifted (a fixed-density search) is not a valid model.
    #[error("no valid model with the offsets shifted by {shift} meV: {reason}")]
    ShiftedModel { shift: f64, reason: String },
}

/// Any failure of a computation at one parameter point.
#[derive(Debug, Clone, Error, PartialEq)]
pub enum NestorError {
    #[error(transparent)]
    Input(#[from] InputError),
    #[error(transparent)]
    Numerical(#[from] NumericalError),
}

pub type Result<T, E = NestorError> = std::result::Result<T, E>;
