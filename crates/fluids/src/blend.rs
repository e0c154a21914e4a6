//! Blends: named mixtures of catalogue fluids with nominal mass compositions
//! (`data/blends.toml`).

use crate::lookup::normalize;
use crate::record::SafetyClass;
use serde::Deserialize;

/// One blend of the catalogue.
#[derive(Debug, Clone, PartialEq)]
pub struct BlendRecord {
    /// Stable identifier, e.g. `r410a`.
    pub id: String,
    /// Display name, e.g. `R-410A`.
    pub name: String,
    /// ASHRAE 34 number, where assigned.
    pub ashrae_number: Option<String>,
    /// Other names.
    pub aliases: Vec<String>,
    /// Hazards to show with every result. Never empty.
    pub caution: String,
    /// ASHRAE 34 safety class, where assigned.
    pub safety_class: Option<SafetyClass>,
    /// (catalogue fluid id, mass fraction), fractions summing to 1.
    pub components: Vec<(String, f64)>,
    /// Citation of the composition and class.
    pub citation: String,
}

impl BlendRecord {
    /// Whether `name` names this blend (ignoring case and punctuation).
    pub fn is_named(&self, name: &str) -> bool {
        let key = normalize(name);
        !key.is_empty()
            && [
                Some(&self.id),
                Some(&self.name),
                self.ashrae_number.as_ref(),
            ]
            .into_iter()
            .flatten()
            .chain(self.aliases.iter())
            .any(|n| normalize(n) == key)
    }
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct File {
    sources: std::collections::BTreeMap<String, String>,
    blend: Vec<RawBlend>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawBlend {
    id: String,
    name: String,
    ashrae_number: Option<String>,
    #[serde(default)]
    aliases: Vec<String>,
    caution: String,
    safety_class: Option<Sourced>,
    components: Vec<RawComponent>,
    composition_source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Sourced {
    value: String,
    source: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawComponent {
    fluid: String,
    mass_fraction: f64,
}

/// Parses `data/blends.toml`; every problem is a message naming the blend and field.
pub(crate) fn parse(
    text: &str,
    known_fluid: impl Fn(&str) -> bool,
) -> Result<Vec<BlendRecord>, String> {
    let file: File = toml::from_str(text).map_err(|e| e.to_string())?;
    let cite = |key: &str| {
        file.sources
            .get(key)
            .cloned()
            .ok_or_else(|| format!("unknown source key `{key}`"))
    };
    file.blend
        .into_iter()
        .map(|b| {
            let sum: f64 = b.components.iter().map(|c| c.mass_fraction).sum();
            if (sum - 1.0).abs() > 1e-9 {
                return Err(format!(
                    "blend {}: mass fractions sum to {sum}, not 1",
                    b.id
                ));
            }
            for c in &b.components {
                if !known_fluid(&c.fluid) {
                    return Err(format!("blend {}: unknown component `{}`", b.id, c.fluid));
                }
                if c.mass_fraction.is_nan() || c.mass_fraction <= 0.0 {
                    return Err(format!(
                        "blend {}: component {} has fraction {}",
                        b.id, c.fluid, c.mass_fraction
                    ));
                }
            }
            let safety_class = match &b.safety_class {
                Some(s) => {
                    cite(&s.source)?;
                    Some(
                        SafetyClass::ALL
                            .into_iter()
                            .find(|c| c.as_str() == s.value)
                            .ok_or_else(|| {
                                format!("blend {}: unknown safety class {}", b.id, s.value)
                            })?,
                    )
                }
                None => None,
            };
            Ok(BlendRecord {
                citation: cite(&b.composition_source)?,
                id: b.id,
                name: b.name,
                ashrae_number: b.ashrae_number,
                aliases: b.aliases,
                caution: b.caution,
                safety_class,
                components: b
                    .components
                    .into_iter()
                    .map(|c| (c.fluid, c.mass_fraction))
                    .collect(),
            })
        })
        .collect()
}
