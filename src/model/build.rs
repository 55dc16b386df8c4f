//! The validating constructor of the frozen [`Model`]: pocket and channel specs in, every derived
//! quantity out (band form factor, spin channels, pair density of states nu, the mismatch on the
//! nesting line and its range, g from lambda, warnings). Sits between the configuration layer
//! (which parses TOML into specs) and the kernels (whose nesting-line integral it calls: the one
//! place where the model layer reaches up into the kernels, so that derived quantities are
//! computed once, at construction, and can never go stale).

use super::spec::{check_positive, entry_error, key_error, PocketSpec};
use super::{
    form_factor, spin_channels, Channel, CouplingInput, FormFactor, Lattice, Model, SpinMatrix,
};
use crate::error::InputError;
use crate::kernels::susceptibility::nesting_line;
use crate::kernels::{Accuracy, Shell};
use crate::model::Pocket;

/// Above this lambda mean-field theory is doubtful (a warning, not an error).
const STRONG_LAMBDA: f64 = 0.5;

/// A pairing channel as given by the user.
#[derive(Debug, Clone, PartialEq)]
pub struct ChannelSpec {
    /// Optional unique name (the NAME of `NAME.key` parameter paths).
    pub name: Option<String>,
    /// Indices of the electron-like and the hole-like pocket, in pocket order.
    pub pockets: [usize; 2],
    /// The coupling: dimensionless lambda (0 < lambda <= 10) or g in meV nm^2.
    pub coupling: CouplingInput,
    /// Shell half-width Lambda in meV.
    pub cutoff: f64,
    pub spin_matrix: SpinMatrix,
    /// Orbital overlap factor m_ab in [0, 10].
    pub overlap: f64,
}

/// Everything a build needs besides the specs: g pinned per channel (None: from the spec) and
/// the common offset shift (meV).
pub(super) struct BuildOptions<'a> {
    pub pinned: &'a [Option<f64>],
    pub shift: f64,
}

impl Model {
    /// Builds and validates a model from pocket specs, channel specs and the optional surface
    /// lattice. Couplings given as lambda are converted to g with this model's pair density of
    /// states. Messages name the entry and key (`pocket "B": `offset`: ...`).
    pub fn new(
        pockets: Vec<PocketSpec>,
        channels: Vec<ChannelSpec>,
        surface: Option<Lattice>,
    ) -> Result<Model, InputError> {
        let opts = BuildOptions {
            pinned: &[],
            shift: 0.0,
        };
        Model::build(pockets, channels, surface, &opts)
    }

    /// As [`Model::new`], with g fixed per channel where `pinned` has a value (a sweep point
    /// keeps the couplings of its base configuration).
    pub fn new_pinned(
        pockets: Vec<PocketSpec>,
        channels: Vec<ChannelSpec>,
        surface: Option<Lattice>,
        pinned: &[Option<f64>],
    ) -> Result<Model, InputError> {
        let opts = BuildOptions { pinned, shift: 0.0 };
        Model::build(pockets, channels, surface, &opts)
    }

    /// As [`Model::new`], with couplings pinned per channel and every offset shifted.
    pub(super) fn build(
        pocket_specs: Vec<PocketSpec>,
        channel_specs: Vec<ChannelSpec>,
        surface: Option<Lattice>,
        opts: &BuildOptions,
    ) -> Result<Model, InputError> {
        let mut pockets: Vec<Pocket> = Vec::with_capacity(pocket_specs.len());
        for spec in &pocket_specs {
            if pocket_specs.iter().filter(|p| p.name == spec.name).count() > 1 {
                return Err(key_error(
                    &spec.entry(),
                    "name",
                    "duplicate; pocket names must be unique",
                ));
            }
            pockets.push(spec.build(opts.shift)?);
        }
        if let Some(lattice) = surface {
            check_lattice(&lattice)?;
        }
        let mut warnings = Vec::new();
        let mut channels: Vec<Channel> = Vec::with_capacity(channel_specs.len());
        for (i, spec) in channel_specs.iter().enumerate() {
            check_channel_name(&pocket_specs, &channel_specs[..i], spec, i)?;
            let pinned = opts.pinned.get(i).copied().flatten();
            channels.push(derive_channel(&pockets, spec, pinned, &mut warnings)?);
        }
        Ok(Model {
            pocket_specs,
            channel_specs,
            pockets,
            channels,
            surface,
            warnings,
            shift: opts.shift,
        })
    }
}

/// Range checks of the lattice constants (nm).
fn check_lattice(lattice: &Lattice) -> Result<(), InputError> {
    let positive = |key: &str, x: f64| {
        check_positive(x, "nm", 1e3)
            .map(|_| ())
            .map_err(|why| key_error("[surface]", key, why))
    };
    match *lattice {
        Lattice::Square { a } | Lattice::Hexagonal { a } => positive("a", a),
        Lattice::Rectangular { a, b } => positive("a", a).and_then(|_| positive("b", b)),
    }
}

/// A channel name must not repeat a pocket's or an earlier channel's.
fn check_channel_name(
    pockets: &[PocketSpec],
    earlier: &[ChannelSpec],
    spec: &ChannelSpec,
    i: usize,
) -> Result<(), InputError> {
    let Some(n) = &spec.name else {
        return Ok(());
    };
    if pockets.iter().any(|p| &p.name == n) || earlier.iter().any(|c| c.name.as_ref() == Some(n)) {
        return Err(key_error(
            &format!("[[channel]] #{}", i + 1),
            "name",
            format!("`{n}` is already used by a pocket or channel"),
        ));
    }
    Ok(())
}

/// The channel's label (its name, or "A-B") and the entry name used in messages.
pub(super) fn channel_label(pockets: &[Pocket], spec: &ChannelSpec) -> (String, String) {
    let [a, b] = spec.pockets;
    let names = |i: usize| pockets.get(i).map(|p| p.name()).unwrap_or("?");
    match &spec.name {
        Some(n) => (n.clone(), format!("channel \"{n}\"")),
        None => {
            let label = format!("{}-{}", names(a), names(b));
            let entry = format!("channel {label}");
            (label, entry)
        }
    }
}

/// The pockets must exist, differ, and be electron-like then hole-like.
fn check_channel_pockets(
    pockets: &[Pocket],
    spec: &ChannelSpec,
    entry: &str,
) -> Result<(), InputError> {
    let [a, b] = spec.pockets;
    if a >= pockets.len() || b >= pockets.len() {
        return Err(key_error(entry, "pockets", "pocket index out of range"));
    }
    if a == b {
        return Err(key_error(entry, "pockets", "the two pockets must differ"));
    }
    let (na, nb) = (pockets[a].name(), pockets[b].name());
    if !pockets[a].is_electron_like() {
        let swap = if pockets[b].is_electron_like() {
            format!(" (swap them: [\"{nb}\", \"{na}\"])")
        } else {
            String::new()
        };
        return Err(key_error(
            entry,
            "pockets",
            format!("the first pocket must be electron-like, but \"{na}\" is hole-like{swap}"),
        ));
    }
    if pockets[b].is_electron_like() {
        return Err(key_error(
            entry,
            "pockets",
            format!("the second pocket must be hole-like, but \"{nb}\" is electron-like"),
        ));
    }
    Ok(())
}

/// Range checks of the channel's numbers.
fn check_channel_values(spec: &ChannelSpec, entry: &str) -> Result<(), InputError> {
    let positive = |key: &str, x: f64, unit: &str, hi: f64| {
        check_positive(x, unit, hi)
            .map(|_| ())
            .map_err(|why| key_error(entry, key, why))
    };
    positive("cutoff", spec.cutoff, "meV", 1e4)?;
    if !(0.0..=10.0).contains(&spec.overlap) {
        return Err(key_error(
            entry,
            "overlap",
            format!("{} is out of range: expected [0, 10]", spec.overlap),
        ));
    }
    match spec.coupling {
        CouplingInput::Lambda(l) => positive("lambda", l, "(dimensionless)", 10.0),
        CouplingInput::G(g) => positive("g", g, "meV nm^2", 1e9),
    }
}

/// Validates one channel and computes its derived quantities; g is `pinned` when given.
fn derive_channel(
    pockets: &[Pocket],
    spec: &ChannelSpec,
    pinned: Option<f64>,
    warnings: &mut Vec<String>,
) -> Result<Channel, InputError> {
    let (label, entry) = channel_label(pockets, spec);
    check_channel_pockets(pockets, spec, &entry)?;
    check_channel_values(spec, &entry)?;
    let [a, b] = spec.pockets;
    let cutoff = spec.cutoff;
    let (pa, pb) = (&pockets[a], &pockets[b]);
    let form = form_factor(pa, pb, spec.spin_matrix);
    // Shell checks at q = 0.
    let shell =
        Shell::new(pa, pb, form, cutoff, [0.0, 0.0]).map_err(|e| key_error(&entry, "cutoff", e))?;
    if shell.xi_centre > -cutoff {
        warnings.push(format!(
            "channel {label}: the shell |xi| < {cutoff} meV reaches past the band bottom (xi = {:.3} meV at the pockets' centres); the result depends on the band edges",
            shell.xi_centre
        ));
    }
    let line = nesting_line(&shell, &Accuracy::default()).map_err(|e| {
        entry_error(
            &entry,
            format!("cannot compute the pair density of states: {e}"),
        )
    })?;
    let nu = line.nu.value;
    let g = match (pinned, spec.coupling) {
        (Some(g), _) => g,
        (None, CouplingInput::G(g)) => g,
        (None, CouplingInput::Lambda(l)) => {
            if nu <= 1e-12 * line.nu_unweighted {
                return Err(key_error(&entry, "lambda", no_pair_density(&form)));
            }
            l / nu
        }
    };
    if line.mismatch.abs() > cutoff {
        warnings.push(format!(
            "channel {label}: the mismatch |h| = {:.4} meV exceeds the cutoff {cutoff} meV: the pockets are far from nested and no instability is expected",
            line.mismatch.abs()
        ));
    }
    if g * nu > STRONG_LAMBDA {
        warnings.push(format!(
            "channel {label}: lambda = g nu = {:.3} > {STRONG_LAMBDA}: strong coupling, where mean-field theory is doubtful",
            g * nu
        ));
    }
    Ok(Channel {
        name: spec.name.clone(),
        label,
        a,
        b,
        g,
        g_pinned: pinned.is_some(),
        coupling_input: spec.coupling,
        cutoff,
        spin_matrix: spec.spin_matrix,
        overlap: spec.overlap,
        spin_channels: spin_channels(pa, pb),
        form,
        nu,
        mismatch: line.mismatch,
        mismatch_range: [line.mismatch_min, line.mismatch_max],
    })
}

/// Why a channel has no pair density of states (W = 0 on the whole nesting line) and what would
/// pair its pockets; the form factors are in [`crate::theory::channels`].
fn no_pair_density(form: &FormFactor) -> String {
    // An upper and a lower cone (s_a s_b = -1) of equal winding and phase in the charge channel.
    let same_texture = match *form {
        FormFactor::Helical {
            matrix: SpinMatrix::Identity,
            signs: s,
            winding_a: wa,
            winding_b: wb,
            phase_a: pa,
            phase_b: pb,
        } => s < 0.0 && wa == wb && (pa - pb).norm() < 1e-12,
        _ => false,
    };
    let why = if same_texture {
        "the band form factor W = |<chi_a|M|chi_b>|^2 vanishes: an upper and a lower cone (an electron-like and a hole-like helical pocket) of equal winding and texture phase have orthogonal spinors at the same momentum, so the charge channel M = 1 does not pair them"
    } else {
        "the band form factor W = |<chi_a|M|chi_b>|^2 vanishes on the whole nesting line: the spinors of the two pockets are orthogonal under this spin matrix"
    };
    format!(
        "{why}; this channel has no pair density of states, so lambda = g nu cannot be converted. \
         What pairs them: opposite windings (spin = {{ winding = -1 }} on one pocket), a texture phase \
         difference (e.g. spin = {{ winding = 1, phase = 180 }} on one), or a spin channel \
         (spin_matrix = \"z\", \"x\" or \"y\"); to keep this channel as it is, give `g` in meV nm^2 instead"
    )
}
