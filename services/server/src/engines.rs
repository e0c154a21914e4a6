//! Prepared engines: every catalogue fluid under every model and reference state, built
//! once at start-up so that a request only looks up its fluid and computes.

use std::collections::HashMap;

use binodal_eos::{Model, PureEos, ReferenceState};
use binodal_fluids::{Catalogue, FluidRecord};

use crate::status::ServiceError;

/// One fluid's engines, by model and reference state.
#[derive(Debug)]
struct FluidEngines {
    /// `by_model[model][reference]`: the engine with absolute h and s in that reference
    /// state, or without (when the fluid lacks ideal-gas data or the reference state does
    /// not apply), or the engine's construction error.
    by_model: HashMap<(Model, ReferenceState), Result<PureEos, binodal_eos::Error>>,
}

/// The catalogue and its prepared engines.
#[derive(Debug)]
pub struct Engines {
    catalogue: Catalogue,
    fluids: HashMap<String, FluidEngines>,
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
        let mut fluids = HashMap::new();
        for record in catalogue.fluids() {
            let mut by_model = HashMap::new();
            for model in Model::ALL {
                for reference in REFERENCES {
                    let eos = record.eos(model).map(|plain| {
                        match plain.clone().with_reference(reference) {
                            Ok(with_reference) => with_reference,
                            Err(_) => plain,
                        }
                    });
                    by_model.insert((model, reference), eos);
                }
            }
            fluids.insert(record.id.clone(), FluidEngines { by_model });
        }
        Engines {
            catalogue,
            fluids,
            default_model,
            default_reference,
        }
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
        let fluid = self.catalogue.get(name)?;
        let model = model.unwrap_or(self.default_model);
        let tc = fluid.constants.critical_temperature_k;
        let zero_celsius_applies = tc * (1.0 - binodal_eos::NEAR_CRITICAL_BAND) > 273.15;
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
        let eos = engines
            .by_model
            .get(&(model, reference))
            .expect("every model and reference is prepared")
            .as_ref()
            .map_err(|e| ServiceError::Engine(e.clone()))?;
        Ok(Chosen {
            fluid,
            eos,
            reference: eos.reference_state(),
        })
    }
}
