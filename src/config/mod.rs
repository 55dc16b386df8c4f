//! Configuration: the TOML text, `--set PATH=VALUE` overrides, parsing into pocket and channel
//! specs and then [`Model::new_pinned`]. Two stages (house style): the raw TOML table (syntax,
//! overrides), then a validated model; only the model reaches the physics. Paths of `--vary` are
//! resolved here into typed [`crate::model::Param`]s. Every message names the file, the key and
//! what is allowed.

mod overrides;
mod parse;

pub use overrides::{parse_range, Override, Range};

use crate::error::InputError;
use crate::model::Model;

/// A configuration as read from a file (or embedded text), with any overrides applied.
#[derive(Debug, Clone)]
pub struct ConfigSource {
    /// File name (or a label for embedded text) used in messages.
    pub origin: String,
    pub table: toml::Table,
}

/// Couplings pinned at the base configuration: g per channel, in channel order.
#[derive(Debug, Clone, Default)]
pub struct PinnedCouplings(pub Vec<f64>);

impl ConfigSource {
    /// Reads and parses a TOML file.
    pub fn load(path: &std::path::Path) -> Result<Self, InputError> {
        let text = std::fs::read_to_string(path).map_err(|e| {
            InputError::new(format!("cannot read configuration {}: {e}", path.display()))
        })?;
        ConfigSource::from_text(&path.display().to_string(), &text)
    }

    /// Parses TOML text; `origin` names it in messages.
    pub fn from_text(origin: &str, text: &str) -> Result<Self, InputError> {
        let table: toml::Table = text.parse().map_err(|e: toml::de::Error| {
            InputError::new(format!(
                "{origin}: not valid TOML: {}",
                e.to_string().trim_end()
            ))
        })?;
        Ok(ConfigSource {
            origin: origin.to_string(),
            table,
        })
    }

    /// A copy with the overrides applied in order.
    pub fn with_overrides(&self, overrides: &[Override]) -> Result<Self, InputError> {
        let mut out = self.clone();
        for o in overrides {
            overrides::apply(&self.origin, &mut out.table, o)?;
        }
        Ok(out)
    }

    /// Validates into a model. Couplings given as `lambda` are converted to g with this
    /// configuration's pair density of states, unless `pinned` fixes g per channel.
    pub fn build(&self, pinned: Option<&PinnedCouplings>) -> Result<Model, InputError> {
        parse::build_model(&self.origin, &self.table, pinned)
    }

    /// The configuration text as TOML (after overrides), for provenance headers.
    pub fn to_toml(&self) -> String {
        toml::to_string(&self.table).unwrap_or_default()
    }
}

impl Model {
    /// The couplings of this model, to pin a sweep to the base configuration.
    pub fn pinned_couplings(&self) -> PinnedCouplings {
        PinnedCouplings(self.channels().iter().map(|c| c.g()).collect())
    }
}
