//! Error types shared by the pipeline: input errors (configuration, options) and numerical
//! failures (an integral or a root that did not converge). Context and exit codes are added only
//! in `main.rs`.

use thiserror::Error;

/// A user-input problem: the message names the file or option, the key and what is allowed.
#[derive(Debug, Clone, Error, PartialEq)]
#[error("{0}")]
pub struct InputError(pub String);

impl InputError {
    /// An input error with this message.
    pub fn new(msg: impl Into<String>) -> Self {
        InputError(msg.into())
    }
}

/// Why a numerical procedure stopped without a trustworthy number.
#[derive(Debug, Clone, Error, PartialEq)]
pub enum NumericalError {
    /// An iteration stopped before reaching its target.
    #[error("{what}: not converged after {iterations} steps (last change {last_change:.3e}, target {target:.3e})")]
    NotConverged {
        what: String,
        iterations: usize,
        last_change: f64,
        target: f64,
    },
    /// A root search found no sign change in its interval.
    #[error("{what}: no sign change found in [{lo:.6e}, {hi:.6e}]")]
    NotBracketed { what: String, lo: f64, hi: f64 },
    /// The shell |xi| < cutoff is empty at this q.
    #[error("the shell is empty: xi >= {xi_centre:.4} meV everywhere at q = ({:.4}, {:.4})/nm", q[0], q[1])]
    EmptyShell { xi_centre: f64, q: [f64; 2] },
    /// The shell reaches a Dirac point, where the band form factor is singular.
    #[error("{0}")]
    DiracPointInShell(String),
    /// A finite-temperature quantity was asked for at T <= 0 (meV).
    #[error("{what} needs T > 0 (got {t} meV)")]
    NonPositiveTemperature { what: String, t: f64 },
    /// A channel stays unstable up to the highest temperature searched.
    #[error("{0}")]
    UnstableAtTop(String),
    /// Two maxima of chi(q) compete for the modulated instability.
    #[error("{0}")]
    CompetingMaxima(String),
    /// Omega has no (or lost its) minimum where one was required.
    #[error("{0}")]
    NoMinimum(String),
    /// A one-dimensional search failed for another reason than convergence or bracketing.
    #[error("{0}")]
    RootSearch(String),
    /// The weak-coupling closed form does not apply.
    #[error("weak-coupling closed form: {0}")]
    WeakClosedForm(String),
    /// A special-point search met a point without a uniform instability.
    #[error("{what}: no uniform instability at {at}")]
    NoUniformInstability { what: String, at: f64 },
    /// The arguments of a computation are inconsistent (an index, a count, a wavevector set).
    #[error("{0}")]
    BadArgument(String),
    /// A combination the mean field does not handle.
    #[error("{0}")]
    Unsupported(String),
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
