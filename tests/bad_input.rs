//! Bad configurations reach the user as a clear message and exit code 2, never as a panic: each
//! case runs the built `nestor` binary on a bad configuration and checks the exit code, a fragment
//! of the message naming the key and what is allowed, and that nothing reached stdout. Bad
//! command-line options are in tests/bad_options.rs.

mod common;

use common::cli::*;

// Sanity of the fixtures: the unmodified base configurations are accepted.
#[test]
fn base_configurations_are_accepted() {
    for (case, config) in [
        ("nested", nested()),
        (
            "dirac",
            with_dirac(
                "velocity = 300.0\noffset = 10.0",
                "lambda = 0.2\ncutoff = 5.0",
            ),
        ),
    ] {
        let cfg = TempConfig::new("ok", &config);
        let out = nestor(&["check", cfg.path()]);
        assert_eq!(out.status.code(), Some(0), "{case}: {}", text(&out.stderr));
    }
}

// TOML syntax errors, including an overflowing float literal, are reported as such.
#[test]
fn toml_syntax_errors() {
    check_bad(
        "unclosed table header",
        "[[pocket]\nname = \"e\"\n",
        &["not valid TOML", "line 1"],
    );
    check_bad(
        "float overflow 1e400",
        &pair("mass = 1e400\noffset = -100.0", H_BODY, CH_BODY),
        &["not valid TOML", "mass = 1e400"],
    );
}

// Unknown keys at the top level, in a pocket, in a channel and in a spin table.
#[test]
fn unknown_keys() {
    check_bad(
        "unknown top-level key",
        &format!("temperature = 4.0\n{}", nested()),
        &[
            "top level",
            "`temperature`",
            "unknown key",
            "allowed keys: pocket, channel, surface",
        ],
    );
    check_bad(
        "misspelt pocket key",
        &pair("mas = 0.2\noffset = -100.0", H_BODY, CH_BODY),
        &["pocket \"e\"", "`mas`", "unknown key", "mass", "offset"],
    );
    check_bad(
        "unknown channel key",
        &pair(E_BODY, H_BODY, "lambda = 0.25\ncutoff = 5.0\nwidth = 2.0"),
        &["channel \"eh\"", "`width`", "unknown key", "cutoff"],
    );
    check_bad(
        "unknown spin key",
        &pair(
            E_BODY,
            "mass = 0.2\noffset = 100.0\nspin = { winding = 1, tilt = 3.0 }",
            CH_BODY,
        ),
        &["`tilt`", "unknown key", "winding, phase"],
    );
}

// Each required key, when missing, is named together with what it should hold.
#[test]
fn missing_keys() {
    check_bad(
        "missing kind",
        "[[pocket]]\nname = \"e\"\ncenter = [0.0, 0.0]\nmass = 0.2\noffset = -100.0\n",
        &[
            "pocket \"e\"",
            "`kind`",
            "missing",
            "\"electron\", \"hole\" or \"dirac\"",
        ],
    );
    check_bad(
        "missing center",
        "[[pocket]]\nname = \"e\"\nkind = \"electron\"\nmass = 0.2\noffset = -100.0\n",
        &["pocket \"e\"", "`center`", "missing", "[kx, ky] in 1/nm"],
    );
    check_bad(
        "missing offset",
        &pair("mass = 0.2", H_BODY, CH_BODY),
        &["pocket \"e\"", "`offset`", "missing", "meV"],
    );
    check_bad(
        "missing mass",
        &pair("offset = -100.0", H_BODY, CH_BODY),
        &["`mass`", "missing", "`kf`", "`vf`"],
    );
    check_bad(
        "missing Dirac velocity",
        &with_dirac("offset = 10.0", "lambda = 0.2\ncutoff = 5.0"),
        &["pocket \"D\"", "`velocity`", "missing", "meV nm"],
    );
    check_bad(
        "missing cutoff",
        &pair(E_BODY, H_BODY, "lambda = 0.25"),
        &["channel \"eh\"", "`cutoff`", "missing", "meV"],
    );
    check_bad(
        "missing lambda or g",
        &pair(E_BODY, H_BODY, "cutoff = 5.0"),
        &[
            "channel \"eh\"",
            "`lambda`",
            "missing",
            "0 < lambda <= 10",
            "`g`",
        ],
    );
    check_bad(
        "no pockets",
        "[surface]\nlattice = \"square\"\na = 0.4\n",
        &[
            "top level",
            "`pocket`",
            "missing",
            "at least one [[pocket]]",
        ],
    );
}

// Names: duplicates, a channel naming a missing pocket, a channel reusing a pocket's name.
#[test]
fn names() {
    check_bad(
        "duplicate pocket names",
        &(pocket("e", "electron", E_BODY) + &pocket("e", "hole", H_BODY)),
        &["pocket \"e\"", "`name`", "duplicate", "unique"],
    );
    check_bad(
        "channel names a missing pocket",
        &(pocket("e", "electron", E_BODY)
            + &pocket("h", "hole", H_BODY)
            + &channel("e", "x", CH_BODY)),
        &[
            "`pockets`",
            "no pocket is named \"x\"",
            "pockets: \"e\", \"h\"",
        ],
    );
    check_bad(
        "channel named like a pocket",
        &(pocket("e", "electron", E_BODY)
            + &pocket("h", "hole", H_BODY)
            + "[[channel]]\nname = \"h\"\npockets = [\"e\", \"h\"]\nlambda = 0.25\ncutoff = 5.0\n"),
        &["`name`", "`h` is already used"],
    );
    check_bad(
        "pocket name with a dot",
        &(pocket("e.1", "electron", E_BODY) + &pocket("h", "hole", H_BODY)),
        &["`name`", "none of . = [ ]"],
    );
}

// Channel pockets must be electron-like then hole-like.
#[test]
fn channel_pocket_order() {
    check_bad(
        "hole-like pocket first",
        &(pocket("e", "electron", E_BODY)
            + &pocket("h", "hole", H_BODY)
            + &channel("h", "e", CH_BODY)),
        &[
            "`pockets`",
            "first pocket must be electron-like",
            "\"h\" is hole-like",
            "swap them: [\"e\", \"h\"]",
        ],
    );
    check_bad(
        "two electron-like pockets",
        &(pocket("e", "electron", E_BODY)
            + &pocket("f", "electron", E_BODY)
            + &channel("e", "f", CH_BODY)),
        &[
            "`pockets`",
            "second pocket must be hole-like",
            "\"f\" is electron-like",
        ],
    );
    check_bad(
        "the same pocket twice",
        &(pocket("e", "electron", E_BODY) + &channel("e", "e", CH_BODY)),
        &["`pockets`", "must differ"],
    );
}

// Offsets that leave a pocket without a Fermi surface.
#[test]
fn offsets_without_fermi_surface() {
    check_bad(
        "electron pocket with offset > 0",
        &pair("mass = 0.2\noffset = 5.0", H_BODY, CH_BODY),
        &["pocket \"e\"", "`offset`", "offset < 0", "no Fermi surface"],
    );
    check_bad(
        "hole pocket with offset < 0",
        &pair(E_BODY, "mass = 0.2\noffset = -5.0", CH_BODY),
        &["pocket \"h\"", "`offset`", "offset > 0", "no Fermi surface"],
    );
    check_bad(
        "Dirac pocket with offset 0",
        &with_dirac(
            "velocity = 300.0\noffset = 0.0",
            "lambda = 0.2\ncutoff = 5.0",
        ),
        &["pocket \"D\"", "`offset`", "0 meV", "must be non-zero"],
    );
    check_bad(
        "offset out of range",
        &pair("mass = 0.2\noffset = -2e5", H_BODY, CH_BODY),
        &["`offset`", "|offset| <= 1e5 meV"],
    );
}

// Masses and velocities must be finite and positive, with the allowed range in the message.
#[test]
fn masses_and_velocities() {
    check_bad(
        "negative mass",
        &pair("mass = -0.2\noffset = -100.0", H_BODY, CH_BODY),
        &[
            "pocket \"e\"",
            "`mass`",
            "-0.2 is out of range",
            "(0, 1000]",
        ],
    );
    check_bad(
        "zero mass",
        &pair(E_BODY, "mass = 0.0\noffset = 100.0", CH_BODY),
        &["pocket \"h\"", "`mass`", "0 is out of range", "(0, 1000]"],
    );
    check_bad(
        "nan mass",
        &pair("mass = nan\noffset = -100.0", H_BODY, CH_BODY),
        &["`mass`", "non-finite", "(0, 1000]"],
    );
    check_bad(
        "mass pair of one component",
        &pair("mass = [0.2]\noffset = -100.0", H_BODY, CH_BODY),
        &["`mass`", "1 components", "[x, y]", "(0, 1000]"],
    );
    check_bad(
        "infinite velocity",
        &with_dirac(
            "velocity = inf\noffset = 10.0",
            "lambda = 0.2\ncutoff = 5.0",
        ),
        &["pocket \"D\"", "`velocity`", "non-finite", "(0, 100000]"],
    );
    check_bad(
        "negative velocity",
        &with_dirac(
            "velocity = -300.0\noffset = 10.0",
            "lambda = 0.2\ncutoff = 5.0",
        ),
        &["`velocity`", "-300 is out of range", "(0, 100000] meV nm"],
    );
    check_bad(
        "zero velocity component",
        &with_dirac(
            "velocity = [300.0, 0.0]\noffset = 10.0",
            "lambda = 0.2\ncutoff = 5.0",
        ),
        &["`velocity`", "0 is out of range", "(0, 100000]"],
    );
    check_bad(
        "mass given as a string",
        &pair("mass = \"light\"\noffset = -100.0", H_BODY, CH_BODY),
        &["`mass`", "got a string", "(0, 1000]"],
    );
}

// Keys that exclude each other, or belong to another pocket kind.
#[test]
fn conflicting_keys() {
    check_bad(
        "both mass and kf",
        &pair("mass = 0.2\noffset = -100.0\nkf = 0.7", H_BODY, CH_BODY),
        &["pocket \"e\"", "`mass`", "`kf`", "not both"],
    );
    check_bad(
        "offset with kf and vf",
        &pair("kf = 0.7\nvf = 270.0\noffset = -100.0", H_BODY, CH_BODY),
        &["`offset`", "not allowed with `kf` + `vf`"],
    );
    check_bad(
        "velocity on an electron pocket",
        &pair(
            "mass = 0.2\noffset = -100.0\nvelocity = 300.0",
            H_BODY,
            CH_BODY,
        ),
        &["pocket \"e\"", "`velocity`", "is for \"dirac\" pockets"],
    );
    check_bad(
        "mass on a Dirac pocket",
        &with_dirac(
            "velocity = 300.0\noffset = 10.0\nmass = 0.2",
            "lambda = 0.2\ncutoff = 5.0",
        ),
        &["pocket \"D\"", "`mass`", "takes `velocity`"],
    );
    check_bad(
        "both lambda and g",
        &pair(E_BODY, H_BODY, "lambda = 0.25\ng = 500.0\ncutoff = 5.0"),
        &["channel \"eh\"", "`lambda`", "`g`", "not both"],
    );
    check_bad(
        "unknown pocket kind",
        &pocket("e", "metal", E_BODY),
        &[
            "`kind`",
            "`metal` is not a pocket kind",
            "\"electron\", \"hole\", \"dirac\"",
        ],
    );
}

// Channel values: coupling range, spin matrix, overlap, cutoff.
#[test]
fn channel_values() {
    check_bad(
        "lambda above range",
        &pair(E_BODY, H_BODY, "lambda = 12.0\ncutoff = 5.0"),
        &["`lambda`", "12 is out of range", "(0, 10]"],
    );
    check_bad(
        "lambda zero",
        &pair(E_BODY, H_BODY, "lambda = 0.0\ncutoff = 5.0"),
        &["`lambda`", "0 is out of range", "(0, 10]"],
    );
    check_bad(
        "negative g",
        &pair(E_BODY, H_BODY, "g = -5.0\ncutoff = 5.0"),
        &["`g`", "-5 is out of range", "meV nm^2"],
    );
    check_bad(
        "unknown spin_matrix",
        &pair(
            E_BODY,
            H_BODY,
            "lambda = 0.25\ncutoff = 5.0\nspin_matrix = \"w\"",
        ),
        &[
            "`spin_matrix`",
            "not allowed",
            "\"1\", \"x\", \"y\" or \"z\"",
        ],
    );
    check_bad(
        "overlap out of range",
        &pair(
            E_BODY,
            H_BODY,
            "lambda = 0.25\ncutoff = 5.0\noverlap = -1.0",
        ),
        &["`overlap`", "[0, 10]"],
    );
    check_bad(
        "negative cutoff",
        &pair(E_BODY, H_BODY, "lambda = 0.25\ncutoff = -5.0"),
        &["`cutoff`", "-5 is out of range", "(0, 10000] meV"],
    );
}

// Spin textures: the winding must be 1 or -1, and the spin key a string or a table.
#[test]
fn spin_textures() {
    check_bad(
        "winding 2",
        &with_dirac(
            "velocity = 300.0\noffset = 10.0\nspin = { winding = 2, phase = 0.0 }",
            "lambda = 0.2\ncutoff = 5.0",
        ),
        &["pocket \"D\" spin", "`winding`", "expected 1 or -1, got 2"],
    );
    check_bad(
        "winding missing",
        &with_dirac(
            "velocity = 300.0\noffset = 10.0\nspin = { phase = 30.0 }",
            "lambda = 0.2\ncutoff = 5.0",
        ),
        &["`winding`", "missing", "1 or -1"],
    );
    check_bad(
        "unknown spin string",
        &with_dirac(
            "velocity = 300.0\noffset = 10.0\nspin = \"up\"",
            "lambda = 0.2\ncutoff = 5.0",
        ),
        &["`spin`", "\"degenerate\"", "winding = 1 or -1"],
    );
}

// A shell that reaches a Dirac point: the Dirac point at 10 meV lies inside a 30 meV shell.
#[test]
fn shell_reaching_a_dirac_point() {
    check_bad(
        "cutoff past the Dirac point",
        &with_dirac(
            "velocity = 300.0\noffset = 10.0",
            "lambda = 0.2\ncutoff = 30.0",
        ),
        &[
            "channel \"eD\"",
            "`cutoff`",
            "reaches a Dirac point",
            "must be below 10",
        ],
    );
}

// `lambda` cannot be converted when the form factor kills the pair density of states; asks for `g`.
#[test]
fn lambda_with_vanishing_pair_density() {
    let cones = |ch: &str| {
        pocket(
            "A",
            "dirac",
            "velocity = 300.0\noffset = -50.0\nspin = { winding = 1, phase = 0.0 }",
        ) + &pocket(
            "B",
            "dirac",
            "velocity = 300.0\noffset = 50.0\nspin = { winding = 1, phase = 0.0 }",
        ) + &channel("A", "B", ch)
    };
    check_bad(
        "vanishing pair density with lambda",
        &cones("lambda = 0.2\nspin_matrix = \"1\"\ncutoff = 5.0"),
        &["channel \"AB\"", "`lambda`", "vanishes", "give `g`"],
    );
    // With g the same channel is legal.
    let cfg = TempConfig::new(
        "cones-g",
        &cones("g = 100.0\nspin_matrix = \"1\"\ncutoff = 5.0"),
    );
    let out = nestor(&["check", cfg.path()]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
}

// The [surface] table: rectangular needs b, others refuse it, the lattice must be known.
#[test]
fn surface_table() {
    let with_surface = |s: &str| format!("[surface]\n{s}\n\n{}", nested());
    check_bad(
        "rectangular without b",
        &with_surface("lattice = \"rectangular\"\na = 0.4"),
        &[
            "[surface]",
            "`b`",
            "missing",
            "rectangular lattice needs `b`",
        ],
    );
    check_bad(
        "square with b",
        &with_surface("lattice = \"square\"\na = 0.4\nb = 0.5"),
        &["[surface]", "`b`", "only a rectangular lattice"],
    );
    check_bad(
        "unknown lattice",
        &with_surface("lattice = \"oblique\"\na = 0.4"),
        &["`lattice`", "`oblique` is not a lattice", "\"square\""],
    );
    check_bad(
        "zero lattice constant",
        &with_surface("lattice = \"square\"\na = 0.0"),
        &["`a`", "(0, 1000] nm"],
    );
}

// A centre must have two components; kf and vf must give a usable band edge.
#[test]
fn centre_and_kf_vf() {
    check_bad(
        "centre with three components",
        &("[[pocket]]\nname = \"e\"\nkind = \"electron\"\ncenter = [0.0, 0.0, 1.0]\n".to_string()
            + E_BODY),
        &["`center`", "[kx, ky] in 1/nm", "3 components"],
    );
    check_bad(
        "kf vf band edge underflows",
        &pair("kf = 1e-300\nvf = 1e-300", H_BODY, CH_BODY),
        &["pocket \"e\"", "`vf`", "kf vf / 2", "allowed"],
    );
}

// Bad `--set`: unknown name, non-numeric value, unknown key, wrong section, no '=', non-finite.
