//! Prepared engines: every catalogue fluid under every model and reference state, built
//! once at start-up so that a request only looks up its fluid and computes.

use std::collections::HashMap;
use std::sync::Arc;

use binodal_eos::{Mixture, Model, PureEos, ReferenceState};
use binodal_fluids::{Catalogue, FluidRecord, SafetyClass};

use binodal_proto::v1 as pb;
use rustc_hash::FxHashMap;

use crate::status::ServiceError;

/// One fluid's engines, by model and reference state.
#[derive(Debug)]
struct FluidEngines {
    /// `by_model[model][reference]`: the engine with absolute h and s in that reference
    /// state, or without (when the fluid lacks ideal-gas data or the reference state does
    /// not apply), or the engine's construction error.
    by_model: FxHashMap<(Model, ReferenceState), Result<PureEos, binodal_eos::Error>>,
    /// The basis every answer of each prepared engine carries, built once.
    bases: FxHashMap<(Model, ReferenceState), pb::ResultBasis>,
}

/// What a name exactly as the catalogue spells it resolves to (see `Engines::exact_names`).
#[derive(Debug, Clone, Copy)]
enum Named {
    /// A catalogue blend, by its position in the catalogue's blend list.
    Blend(usize),
    /// A catalogue fluid, by its position in the catalogue's fluid list.
    Fluid(usize),
}

/// The catalogue and its prepared engines.
#[derive(Debug)]
pub struct Engines {
    catalogue: Catalogue,
    fluids: FxHashMap<String, FluidEngines>,
    /// Every catalogue blend (by its position in the catalogue's blend list) under every model
    /// and reference state.
    blends: HashMap<(usize, Model, ReferenceState), Result<Arc<Mixture>, binodal_eos::Error>>,
    /// Each catalogue blend's component records with their mass fractions, by position.
    blend_components: Vec<Arc<[(FluidRecord, f64)]>>,
    /// Every name of every catalogue blend (id, display name, ASHRAE number, aliases),
    /// normalized, to its position in the catalogue's blend list: a request resolves a blend
    /// name with one normalization and one hash look-up.
    blend_names: HashMap<String, usize>,
    /// Every spelling the catalogue gives (id, display name, ASHRAE number, aliases of each
    /// fluid and blend), exactly as written, resolved at start-up by the same rules as any
    /// other name: a request that spells a name as the catalogue does resolves with one fast
    /// hash of the name as sent, any other spelling through normalization.
    exact_names: FxHashMap<String, Named>,
    /// The equation of state used when a request leaves it unspecified.
    pub default_model: Model,
    /// The reference state used when a request leaves it unspecified.
    pub default_reference: ReferenceState,
}

/// An engine chosen for a request, with the reference state it actually uses.
#[derive(Debug)]
pub struct Chosen<'a> {
    /// The fluid.
    pub fluid: &'a FluidRecord,
    /// The engine.
    pub eos: &'a PureEos,
    /// The reference state of its absolute h and s, if it has them.
    pub reference: Option<ReferenceState>,
    /// What every answer from this engine says about how it was computed (prepared once).
    pub basis: &'a pb::ResultBasis,
}

/// A mixture chosen for a request.
#[derive(Debug)]
pub struct MixtureChoice {
    /// The blend's id, or `mixture` for a custom mixture.
    pub id: String,
    /// Display name.
    pub name: String,
    /// The prepared mixture.
    pub mixture: Arc<Mixture>,
    /// The component records with the fractions as given.
    pub components: Arc<[(FluidRecord, f64)]>,
    /// The caution to show.
    pub caution: String,
    /// ASHRAE 34 class of a catalogue blend.
    pub safety_class: Option<SafetyClass>,
    /// Notes on how the request was read.
    pub warnings: Vec<String>,
    /// The reference state of absolute h and s, if available.
    pub reference: Option<ReferenceState>,
}

const REFERENCES: [ReferenceState; 2] = [
    ReferenceState::LiquidAtZeroCelsius,
    ReferenceState::LiquidAtNormalBoilingPoint,
];

impl Engines {
    /// Prepares every fluid of `catalogue` under every model and reference state.
    pub fn prepare(
        catalogue: Catalogue,
        default_model: Model,
        default_reference: ReferenceState,
    ) -> Engines {
        // Every fluid and model with a saturation curve, built in parallel (see `curves`).
        let (pure, _curves) = crate::curves::prepare_pure(catalogue.fluids(), &REFERENCES);
        let fluids: FxHashMap<String, FluidEngines> = pure
            .into_iter()
            .zip(catalogue.fluids())
            .map(|((id, by_model), record)| {
                let bases = by_model
                    .iter()
                    .filter_map(|(&key, eos)| {
                        let eos = eos.as_ref().ok()?;
                        Some((key, crate::convert::prepare_basis(record, eos)))
                    })
                    .collect();
                let by_model = by_model.into_iter().collect();
                (id, FluidEngines { by_model, bases })
            })
            .collect();
        let mut engines = Engines {
            catalogue,
            fluids,
            blends: HashMap::new(),
            blend_components: Vec::new(),
            blend_names: HashMap::new(),
            exact_names: FxHashMap::default(),
            default_model,
            default_reference,
        };
        // Every blend, model and reference state, with bubble and dew lines per blend and
        // model, built in parallel (see `curves`).
        let catalogue_blends = engines.catalogue.blends();
        let (blends, _lines) = crate::curves::prepare_blends(
            catalogue_blends.len(),
            &REFERENCES,
            |i, model, reference| {
                engines
                    .build_mixture(
                        &catalogue_blends[i].components,
                        true,
                        model,
                        Some(reference),
                    )
                    .map(|(m, _)| m)
            },
            |i| catalogue_blends[i].id.clone(),
        );
        let blend_components = catalogue_blends
            .iter()
            .map(|blend| engines.component_records(&blend.components))
            .collect();
        engines.blends = blends;
        engines.blend_components = blend_components;
        let mut blend_names = HashMap::new();
        for (i, blend) in engines.catalogue.blends().iter().enumerate() {
            let names = [
                Some(&blend.id),
                Some(&blend.name),
                blend.ashrae_number.as_ref(),
            ]
            .into_iter()
            .flatten()
            .chain(blend.aliases.iter());
            for name in names {
                let key = binodal_fluids::normalize(name);
                if !key.is_empty() {
                    // The first blend with a name wins, as in `Catalogue::blend`.
                    blend_names.entry(key).or_insert(i);
                }
            }
        }
        engines.blend_names = blend_names;
        engines.exact_names = engines.resolve_spellings();
        engines
    }

    /// Every spelling of every catalogue fluid and blend, resolved by the normalizing look-ups
    /// (`blend_index_normalized`, then `Catalogue::get`), so that the fast path can only give
    /// the answer the slow one gives.
    fn resolve_spellings(&self) -> FxHashMap<String, Named> {
        let fluids = self.catalogue.fluids();
        let blends = self.catalogue.blends();
        let spellings = fluids
            .iter()
            .flat_map(|f| {
                [Some(&f.id), Some(&f.name), f.ashrae_number.as_ref()]
                    .into_iter()
                    .flatten()
                    .chain(&f.aliases)
            })
            .chain(blends.iter().flat_map(|b| {
                [Some(&b.id), Some(&b.name), b.ashrae_number.as_ref()]
                    .into_iter()
                    .flatten()
                    .chain(&b.aliases)
            }));
        let mut exact = FxHashMap::default();
        for spelling in spellings {
            let named = if let Some(i) = self.blend_index_normalized(spelling) {
                Named::Blend(i)
            } else if let Ok(record) = self.catalogue.get(spelling) {
                let i = fluids
                    .iter()
                    .position(|f| f.id == record.id)
                    .expect("a record the catalogue returns is in its list");
                Named::Fluid(i)
            } else {
                continue;
            };
            exact.entry(spelling.clone()).or_insert(named);
        }
        exact
    }

    /// The position of the blend `name` names, through normalization.
    fn blend_index_normalized(&self, name: &str) -> Option<usize> {
        self.blend_names
            .get(&binodal_fluids::normalize(name))
            .copied()
    }

    /// The position of the blend `name` names, if any.
    fn blend_index(&self, name: &str) -> Option<usize> {
        match self.exact_names.get(name) {
            Some(&Named::Blend(i)) => Some(i),
            Some(&Named::Fluid(_)) => None,
            None => self.blend_index_normalized(name),
        }
    }

    /// The catalogue fluid `name` names.
    fn fluid_record(&self, name: &str) -> Result<&FluidRecord, binodal_fluids::LookupError> {
        match self.exact_names.get(name) {
            Some(&Named::Fluid(i)) => Ok(&self.catalogue.fluids()[i]),
            _ => self.catalogue.get(name),
        }
    }

    /// A mixture of catalogue fluids `(id, fraction)` under `model`, with absolute h and s
    /// in `reference` where that applies (falling back to the normal-boiling-point
    /// reference, then to none). Returns the mixture and the reference it uses.
    fn build_mixture(
        &self,
        parts: &[(String, f64)],
        mass_basis: bool,
        model: Model,
        reference: Option<ReferenceState>,
    ) -> Result<(Mixture, Option<ReferenceState>), binodal_eos::Error> {
        let mut components = Vec::with_capacity(parts.len());
        for (id, _) in parts {
            let record = self
                .catalogue
                .get(id)
                .expect("mixture components are resolved first");
            components.push(record.eos(model)?);
        }
        let fractions: Vec<f64> = parts.iter().map(|p| p.1).collect();
        let mole = if mass_basis {
            Mixture::mole_fractions_from_mass(&components, &fractions)
        } else {
            fractions
        };
        let plain = Mixture::new(components, mole, None)?;
        let Some(reference) = reference else {
            return Ok((plain, None));
        };
        for r in [reference, ReferenceState::LiquidAtNormalBoilingPoint] {
            if let Ok(m) = plain.clone().with_reference(r) {
                return Ok((m, Some(r)));
            }
        }
        Ok((plain, None))
    }

    /// The mixture for a request: a catalogue blend by name, or a custom mixture of
    /// catalogue fluids. `Ok(None)` when `name` names no blend.
    pub fn choose_blend(
        &self,
        name: &str,
        model: Option<Model>,
        reference: Option<ReferenceState>,
    ) -> Result<Option<MixtureChoice>, ServiceError> {
        let Some(index) = self.blend_index(name) else {
            return Ok(None);
        };
        let blend = &self.catalogue.blends()[index];
        let model = model.unwrap_or(self.default_model);
        let reference = reference.unwrap_or(self.default_reference);
        let mixture = self
            .blends
            .get(&(index, model, reference))
            .expect("every blend is prepared")
            .clone()
            .map_err(ServiceError::Engine)?;
        Ok(Some(MixtureChoice {
            id: blend.id.clone(),
            name: blend.name.clone(),
            reference: mixture.reference_state(),
            components: Arc::clone(&self.blend_components[index]),
            caution: blend.caution.clone(),
            safety_class: blend.safety_class,
            warnings: Vec::new(),
            mixture,
        }))
    }

    /// A custom mixture of catalogue fluids `(name, fraction)` (fractions already checked).
    pub fn choose_custom(
        &self,
        parts: &[(String, f64)],
        mass_basis: bool,
        model: Option<Model>,
        reference: Option<ReferenceState>,
        warnings: Vec<String>,
    ) -> Result<MixtureChoice, ServiceError> {
        let mut resolved = Vec::with_capacity(parts.len());
        for (i, (name, fraction)) in parts.iter().enumerate() {
            let record = self.catalogue.get(name).map_err(|e| {
                let message = match self.blend_index(name) {
                    Some(blend) => format!(
                        "{} is a blend; a mixture's components are pure fluids: list the blend's \
                         own components, or ask for the blend by name as the fluid",
                        self.catalogue.blends()[blend].name
                    ),
                    None => e.to_string(),
                };
                ServiceError::field(format!("fluid.mixture.components[{i}].fluid"), message)
            })?;
            if resolved
                .iter()
                .any(|(id, _): &(String, f64)| *id == record.id)
            {
                return Err(ServiceError::field(
                    format!("fluid.mixture.components[{i}].fluid"),
                    format!("{} appears twice; list each component once", record.name),
                ));
            }
            resolved.push((record.id.clone(), *fraction));
        }
        let model = model.unwrap_or(self.default_model);
        let (mixture, used) = self
            .build_mixture(
                &resolved,
                mass_basis,
                model,
                Some(reference.unwrap_or(self.default_reference)),
            )
            .map_err(ServiceError::Engine)?;
        let components = self.component_records(&resolved);
        let caution = components
            .iter()
            .map(|(f, _)| format!("{}: {}", f.name, f.caution))
            .collect::<Vec<_>>()
            .join(" ");
        Ok(MixtureChoice {
            id: "mixture".into(),
            name: components
                .iter()
                .map(|(f, _)| f.name.as_str())
                .collect::<Vec<_>>()
                .join("/"),
            reference: used,
            components,
            caution,
            safety_class: None,
            warnings,
            mixture: Arc::new(mixture),
        })
    }

    fn component_records(&self, parts: &[(String, f64)]) -> Arc<[(FluidRecord, f64)]> {
        parts
            .iter()
            .map(|(id, w)| (self.catalogue.get(id).expect("resolved").clone(), *w))
            .collect()
    }

    /// The catalogue.
    pub fn catalogue(&self) -> &Catalogue {
        &self.catalogue
    }

    /// The engine for `name` under `model` (None: the default) and `reference` (None: the
    /// default, falling back to the normal-boiling-point reference for a fluid whose
    /// critical temperature is at or below 0 °C).
    pub fn choose(
        &self,
        name: &str,
        model: Option<Model>,
        reference: Option<ReferenceState>,
    ) -> Result<Chosen<'_>, ServiceError> {
        let fluid = self.fluid_record(name)?;
        let model = model.unwrap_or(self.default_model);
        let tc = fluid.constants.critical_temperature_k;
        let zero_celsius_applies = tc * (1.0 - binodal_eos::NEAR_CRITICAL_BAND) > 273.15;
        let requested = reference;
        let reference = match reference {
            Some(ReferenceState::LiquidAtZeroCelsius) if !zero_celsius_applies => {
                return Err(ServiceError::field(
                    "reference_state",
                    format!(
                        "liquid at 0 °C needs a critical temperature above 273.15 K; {} has \
                         Tc = {tc} K: use REFERENCE_STATE_LIQUID_AT_NORMAL_BOILING_POINT",
                        fluid.name
                    ),
                ));
            }
            Some(r) => r,
            None if !zero_celsius_applies => ReferenceState::LiquidAtNormalBoilingPoint,
            None => self.default_reference,
        };
        let engines = self
            .fluids
            .get(&fluid.id)
            .expect("every catalogue fluid is prepared");
        let usable = |r: ReferenceState| matches!(engines.by_model.get(&(model, r)), Some(Ok(_)));
        // A defaulted reference that cannot apply to this fluid gives way to one that can.
        let reference = match REFERENCES.iter().find(|&&r| usable(r)) {
            Some(&other) if requested.is_none() && !usable(reference) => other,
            _ => reference,
        };
        let eos = match engines
            .by_model
            .get(&(model, reference))
            .expect("every model and reference is prepared")
        {
            Ok(eos) => eos,
            // The fluid works under this model with another reference: the reference is at fault
            // (e.g. carbon dioxide has no liquid at one atmosphere, its triple point lies above).
            Err(e) if REFERENCES.iter().any(|&r| r != reference && usable(r)) => {
                return Err(ServiceError::field(
                    "reference_state",
                    format!(
                        "{} cannot use the reference state {}: the model finds no saturated \
                         liquid at its defining condition ({e}); choose another reference state",
                        fluid.name,
                        reference.id()
                    ),
                ));
            }
            Err(e) => return Err(ServiceError::Engine(e.clone())),
        };
        let basis = engines
            .bases
            .get(&(model, reference))
            .expect("every prepared engine has its basis");
        Ok(Chosen {
            fluid,
            eos,
            reference: eos.reference_state(),
            basis,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The blend index or fluid id a name resolves to through the normalizing look-ups
    /// alone, and through the fast path.
    fn resolutions(engines: &Engines, name: &str) -> [(Option<usize>, Option<String>); 2] {
        let fluid_id = |record: Result<&FluidRecord, _>| record.ok().map(|r| r.id.clone());
        let slow = match engines.blend_index_normalized(name) {
            Some(i) => (Some(i), None),
            None => (None, fluid_id(engines.catalogue.get(name))),
        };
        let fast = match engines.blend_index(name) {
            Some(i) => (Some(i), None),
            None => (None, fluid_id(engines.fluid_record(name))),
        };
        [slow, fast]
    }

    /// The fast entries are made by the normalizing look-ups, so the two paths agree by
    /// construction where an entry exists. What this pins: every spelling the catalogue gives
    /// (listed here independently of `resolve_spellings`) has a fast entry; the same spellings in
    /// other case and punctuation still resolve, through the fallback, to the same record; and
    /// names the catalogue does not know resolve to nothing on both paths.
    #[test]
    fn fast_name_resolution_agrees_with_normalization() {
        let engines = Engines::prepare(
            Catalogue::builtin().clone(),
            Model::PengRobinson1978,
            ReferenceState::LiquidAtZeroCelsius,
        );
        let catalogue = engines.catalogue();
        let mut spellings: Vec<String> = Vec::new();
        for f in catalogue.fluids() {
            spellings.extend([f.id.clone(), f.name.clone()]);
            spellings.extend(f.ashrae_number.clone());
            spellings.extend(f.aliases.iter().cloned());
        }
        for b in catalogue.blends() {
            spellings.extend([b.id.clone(), b.name.clone()]);
            spellings.extend(b.ashrae_number.clone());
            spellings.extend(b.aliases.iter().cloned());
        }
        let mut resolved = 0;
        for spelling in &spellings {
            for name in [
                spelling.clone(),
                spelling.to_uppercase(),
                spelling.replace('-', " "),
                format!(" {spelling}."),
            ] {
                let [slow, fast] = resolutions(&engines, &name);
                assert_eq!(fast, slow, "{name:?}");
                resolved += usize::from(slow != (None, None));
            }
            assert!(
                engines.exact_names.contains_key(spelling.as_str()),
                "{spelling:?} has no fast entry"
            );
        }
        assert_eq!(
            resolved,
            4 * spellings.len(),
            "every variant names something"
        );
        for unknown in ["R-9999", "", "water vapour ice", "R-41O A"] {
            assert_eq!(resolutions(&engines, unknown), [(None, None), (None, None)]);
        }
    }
}
