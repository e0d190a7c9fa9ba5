//! The engine behind the calculator seam: maps the UI's named SI inputs onto the dosing
//! engine's typed inputs, and its results, traces and cautions back onto [`CalcOutcome`].
//!
//! Design choice: a thin translation layer, no chemistry of its own. Values arrive already in
//! SI (flow m³/d, concentrations mg/L, pump capacity L/h) with the significant figures they
//! were typed with, and go to the engine as [`Measured`] values with those units named
//! explicitly (`FlowUnit::M3d`, `VolumeRateUnit::Lph`), so "show the work" and the rounding of
//! the card follow what was measured. The advisory caution is dropped because the results
//! card shows the advisory note permanently. How a product is fed follows its catalog
//! form: a solution through a metering pump, a gas through a gas feeder (rotameter) and a dry
//! chemical through a dry feeder, both set by mass, so the pump kind is never assumed.

use super::seams::{
    CalcEngine, CalcKind, CalcMode, CalcOutcome, CalcRequest, Caution, CautionLevel, Curve, Extra,
    FeedForm, ProductChoice, SeamError, StepOrigin, TraceLine,
};
use super::units::Quantity as Q;

/// pH-adjustment chemicals: the water-chemistry engine's id and the dosing catalog's product
/// of the same compound (a test checks the pairing against both catalogs). Liquids first,
/// then the gas and the dry chemicals, each fed as its catalog form says.
const PH_CHEMICALS: [(&str, &str); 6] = [
    ("caustic", "sodium-hydroxide"),
    ("sulfuric-acid", "sulfuric-acid"),
    ("hydrochloric-acid", "hydrochloric-acid"),
    ("carbon-dioxide", "carbon-dioxide"),
    ("lime", "hydrated-lime"),
    ("soda-ash", "soda-ash"),
];

/// Dechlorinating agents by the compound their dose is expressed as.
const DECHLOR_AGENTS: [&str; 6] = ["SO2", "NaHSO3", "Na2S2O5", "Na2SO3", "Na2S2O3", "C6H8O6"];

/// Liquid coagulants a metering pump feeds, from the dosing catalog.
const COAGULANTS: [&str; 4] = ["alum-liquid", "ferric-chloride", "ferric-sulfate", "pacl"];

/// Lime products for softening; soda ash is the other softening chemical.
const LIMES: [&str; 2] = ["hydrated-lime", "quicklime"];
const SODA_ASH: &str = "soda-ash";

/// Points on a drawn titration curve.
const CURVE_POINTS: usize = 60;
use crate::engine::dosing::catalog::{Catalog, Form, Strength, StrengthBasis};
use crate::engine::dosing::chlorine::{
    ChlorineInput, chloramination, chlorine_dose, chlorine_dose_in_water, dechlorination,
};
use crate::engine::dosing::coagulation::{
    Alkali, Coagulant, CoagulationInput, SludgeInput, coagulant_chemical, coagulation_in_water,
    sludge,
};
use crate::engine::dosing::feed::{FeedInput, FeedResult, PumpKind, UsableRange, feed};
use crate::engine::dosing::pumpcheck::{Measurement, PumpCheckInput, Tolerance, pump_check};
use crate::engine::dosing::softening::{HardnessAnalysis, removal_from_analysis, softening};
use crate::engine::dosing::units::{Flow, FlowUnit, MassRateUnit, VolumeRateUnit};
use crate::engine::dosing::waterside::{PhRange, dose_effect};
use crate::engine::dosing::{self, NamedTrace, Severity};
use crate::engine::sigfig::{Measured, combine, sum_figures};
use crate::engine::trace::Origin;
use crate::engine::water::{self, Precipitation, WaterInput, WaterState};
use crate::engine::{Error, ErrorKind};

/// The dosing engine with its built-in product catalog.
pub struct DosingEngine {
    catalog: Catalog,
}

impl DosingEngine {
    pub fn new() -> Result<DosingEngine, Error> {
        Ok(DosingEngine {
            catalog: Catalog::builtin()?,
        })
    }

    /// Liquid products with a typical strength (what a metering pump feeds), optionally only
    /// those whose dose is expressed as `dose_as`.
    fn solution_products(&self, dose_as: Option<&[&str]>) -> Vec<ProductChoice> {
        self.offered(dose_as)
            .into_iter()
            .filter(|p| p.form == FeedForm::Liquid)
            .collect()
    }

    /// Every product a pump or feeder can be set for, optionally only those dosed as
    /// `dose_as`: liquids with a typical strength, then gases, then dry chemicals. A gas or dry
    /// product is offered only when its usual strength is a purity, the one input it asks for
    /// (calcium hypochlorite and dry alum, rated on another basis, are left out).
    fn offered(&self, dose_as: Option<&[&str]>) -> Vec<ProductChoice> {
        let mut list: Vec<ProductChoice> = self
            .catalog
            .products
            .iter()
            .filter(|p| match p.form {
                Form::Solution => !p.strengths.is_empty(),
                Form::Gas | Form::Dry => {
                    p.strengths.first().map(|s| s.basis) == Some(StrengthBasis::Purity)
                }
            })
            .filter(|p| dose_as.is_none_or(|d| d.contains(&p.dose_as.as_str())))
            .map(choice)
            .collect();
        list.sort_by_key(|c| FeedForm::ALL.iter().position(|f| *f == c.form));
        list
    }

    fn listed(&self, ids: &[&str]) -> Vec<ProductChoice> {
        ids.iter()
            .filter_map(|id| self.catalog.product(id).ok())
            .map(choice)
            .collect()
    }

    fn chosen<'r>(&self, request: &'r CalcRequest) -> Result<&'r str, Error> {
        request
            .product
            .as_deref()
            .ok_or_else(|| Error::new(ErrorKind::UnknownChemical, "no product chosen"))
    }

    /// The chosen product's id and its strength as typed, on the product's usual basis: a
    /// liquid's strength with its SG, a gas's or dry chemical's purity without one.
    fn product_strength(&self, request: &CalcRequest) -> Result<(String, Strength), Error> {
        let product_id = self.chosen(request)?.to_string();
        let product = self.catalog.product(&product_id)?;
        let basis = product
            .strengths
            .first()
            .map_or(StrengthBasis::Weight, |s| s.basis);
        let strength = match product.form {
            Form::Solution => Strength::new(
                measured(request, "strength")?,
                basis,
                Some(measured(request, "specific-gravity")?),
            ),
            Form::Gas | Form::Dry => Strength::new(measured(request, "purity")?, basis, None),
        };
        Ok((product_id, strength))
    }

    /// The pump or feeder the chosen product's form calls for, at the full scale typed
    /// (a volume per hour for a pump, a mass per day for a feeder, both in SI).
    fn pump_for(&self, request: &CalcRequest) -> Result<PumpKind, Error> {
        let product = self.catalog.product(self.chosen(request)?)?;
        Ok(match product.form {
            Form::Solution => PumpKind::Metering {
                capacity: value(request, "pump-capacity")?,
                unit: VolumeRateUnit::Lph,
            },
            Form::Gas => PumpKind::GasFeeder {
                capacity: value(request, "gas-feeder-capacity")?,
                unit: MassRateUnit::KgPerDay,
            },
            Form::Dry => PumpKind::DryFeeder {
                capacity: value(request, "dry-feeder-capacity")?,
                unit: MassRateUnit::KgPerDay,
            },
        })
    }

    fn feed_for(&self, request: &CalcRequest, dose: Measured) -> Result<FeedResult, Error> {
        let (product, strength) = self.product_strength(request)?;
        let input = FeedInput {
            flow: flow(request)?,
            dose,
            product,
            strength,
            pump: Some(self.pump_for(request)?),
            usable_range: UsableRange::default(),
            max_use_level_mg_l: request.max_use_level_mg_l,
        };
        feed(&self.catalog, &input)
    }

    fn name_key(&self, request: &CalcRequest) -> String {
        request
            .product
            .as_deref()
            .and_then(|id| self.catalog.product(id).ok())
            .map_or_else(String::new, |p| p.name_key.clone())
    }

    fn feed_setting(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        let r = self.feed_for(request, measured(request, "dose")?)?;
        Ok(outcome_of_feed(
            self.name_key(request),
            &r,
            Vec::new(),
            Vec::new(),
        ))
    }

    /// Free chlorine: the dose from demand + residual (engine), then the product feed for it.
    fn free_chlorine(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        let demand = measured(request, "chlorine-demand")?;
        let residual = measured(request, "residual-target")?;
        let ammonia_n = request.get("ammonia-n").map(|value| Measured {
            value,
            sig_figs: request.figures("ammonia-n"),
        });
        let input = ChlorineInput {
            demand,
            residual,
            ammonia_n,
            residual_limit_mg_l: None,
        };
        // The water, when all of it was given: the chlorine's effect on pH and alkalinity.
        let water = match (
            request.get("ph"),
            request.get("temperature"),
            request.get("alkalinity"),
        ) {
            (Some(ph), Some(t), Some(alk)) => Some(WaterState::new(&WaterInput::new(ph, t, alk))?),
            _ => None,
        };
        let c = match &water {
            Some(w) => chlorine_dose_in_water(
                &self.catalog,
                &input,
                self.chosen(request)?,
                w,
                PhRange::default(),
            )?,
            None => chlorine_dose(&self.catalog, &input)?,
        };
        // A sum is known to the coarsest decimal place of its terms; the breakpoint term is
        // as good as the ammonia reading it was scaled from.
        let mut terms = vec![demand, residual];
        if let (Some(n), Some(bp)) = (ammonia_n, c.breakpoint_mg_l) {
            terms.push(Measured {
                value: bp,
                sig_figs: n.sig_figs,
            });
        }
        let dose = Measured {
            value: c.dose_mg_l,
            sig_figs: sum_figures(&terms, c.dose_mg_l),
        };
        let r = self.feed_for(request, dose)?;
        let mut out = outcome_of_feed(self.name_key(request), &r, c.traces, c.cautions);
        if let Some(bp) = c.breakpoint_mg_l {
            out.extras.push(Extra {
                key: "breakpoint-dose",
                value: bp,
                quantity: Q::Concentration,
            });
        }
        if let Some(effect) = &c.water {
            out.extras.push(Extra {
                key: "ph-after",
                value: effect.ph_after,
                quantity: Q::Ph,
            });
            out.extras.push(Extra {
                key: "alkalinity-after",
                value: effect.alkalinity_after_mg_l_as_caco3,
                quantity: Q::AsCaCO3,
            });
        }
        Ok(out)
    }

    /// Chloramination: the ammonia (as N) for the chlorine dose and ratio (engine), then the
    /// ammonia product's feed for it.
    fn chloramine(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        let chlorine = measured(request, "chlorine-dose")?;
        let ratio = measured(request, "cl2-n-ratio")?;
        let c = chloramination(&self.catalog, chlorine, ratio)?;
        let dose = Measured {
            value: c.ammonia_n_mg_l,
            sig_figs: combine(chlorine.sig_figs, ratio.sig_figs),
        };
        let r = self.feed_for(request, dose)?;
        Ok(outcome_of_feed(
            self.name_key(request),
            &r,
            c.traces,
            c.cautions,
        ))
    }

    /// Dechlorination: the stoichiometric agent dose for the residual (engine), then the
    /// agent product's feed for it.
    fn dechlorination(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        let agent = self.chosen(request)?;
        let residual = measured(request, "residual-in")?;
        let d = dechlorination(&self.catalog, residual, agent)?;
        let dose = Measured {
            value: d.agent_mg_l,
            sig_figs: figures_of(&d.traces),
        };
        let r = self.feed_for(request, dose)?;
        Ok(outcome_of_feed(
            self.name_key(request),
            &r,
            d.traces,
            d.cautions,
        ))
    }

    /// The water as measured and the chosen pH chemical (water-engine side).
    fn water_and_chemical(
        &self,
        request: &CalcRequest,
    ) -> Result<(WaterState, &'static water::Chemical), Error> {
        let product = self.chosen(request)?;
        let water_id = PH_CHEMICALS
            .iter()
            .find(|(_, p)| *p == product)
            .map(|(w, _)| *w)
            .ok_or_else(|| {
                Error::new(
                    ErrorKind::UnknownChemical,
                    format!("{product} is not a pH chemical"),
                )
            })?;
        let mut input = WaterInput::new(
            value(request, "ph-raw")?,
            value(request, "temperature")?,
            value(request, "alkalinity")?,
        );
        if let Some(calcium) = request.get("calcium-hardness") {
            input = input.with_calcium_as_caco3(calcium);
        }
        let state = WaterState::new(&input)?;
        let chemical = water::Catalog::embedded()?.find(water_id)?;
        Ok((state, chemical))
    }

    /// pH adjustment: the dose that reaches the target pH (water-chemistry engine), then the
    /// liquid product's feed for it (dosing engine).
    fn ph_control(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        let (state, chemical) = self.water_and_chemical(request)?;
        let target = value(request, "ph-target")?;
        let d = water::dose_for_ph(&state, chemical, target, Precipitation::None)?;
        // An equilibrium dose is as good as the alkalinity and the two pH readings behind it.
        let figures = ["alkalinity", "ph-raw", "ph-target"]
            .iter()
            .fold(None, |acc, name| combine(acc, request.figures(name)));
        let dose = Measured {
            value: d.dose_mg_l,
            sig_figs: figures,
        };
        let r = self.feed_for(request, dose)?;
        let mut out = outcome_of_feed(self.name_key(request), &r, Vec::new(), Vec::new());
        out.trace.splice(
            0..0,
            [
                TraceLine::Heading("ph-adjustment".into()),
                TraceLine::Step {
                    text: format!(
                        "pH {:.2} → {:.2}: {:.4} mg/L {}",
                        state.ph(),
                        d.water.ph,
                        d.dose_mg_l,
                        chemical.formula
                    ),
                    origin: Some(StepOrigin {
                        code: "equilibrium",
                        detail: chemical.id.clone(),
                    }),
                },
            ],
        );
        out.extras.push(Extra {
            key: "ph-after",
            value: d.water.ph,
            quantity: Q::Ph,
        });
        out.extras.push(Extra {
            key: "alkalinity-after",
            value: d.water.alkalinity_mg_l_as_caco3,
            quantity: Q::AsCaCO3,
        });
        // With calcium: how the treated water stands to calcium carbonate (scaling or corrosive).
        if request.get("calcium-hardness").is_some() {
            let (after, _) = dose_effect(&state, chemical, d.dose_mg_l, Precipitation::None)?;
            let s = water::stability(&after)?;
            if let Some(lsi) = s.langelier_index {
                out.extras.push(Extra {
                    key: "lsi-after",
                    value: lsi,
                    quantity: Q::Index,
                });
            }
            out.extras.push(Extra {
                key: "ccpp-after",
                value: s.ccpp_mg_l_as_caco3,
                quantity: Q::AsCaCO3,
            });
        }
        Ok(out)
    }

    /// The coagulant the chosen product is, from the dose basis the catalog gives it.
    fn coagulant(&self, request: &CalcRequest) -> Result<Coagulant, Error> {
        let product = self.catalog.product(self.chosen(request)?)?;
        let basicity = product.strengths.iter().find_map(|s| s.basicity_percent);
        Coagulant::parse(
            match product.dose_as.as_str() {
                "Al2(SO4)3·14H2O" => "alum",
                "FeCl3" => "ferric-chloride",
                "Fe2(SO4)3" => "ferric-sulfate",
                "Al" => "pacl",
                other => other,
            },
            basicity,
        )
    }

    /// Coagulation: the jar-test dose of the chosen coagulant, its feed and pump setting; the
    /// alkalinity it consumes (balanced hydrolysis), the supplemental alkali for the residual
    /// alkalinity to keep, the pH it leaves (water engine, metal precipitated as hydroxide) and
    /// the dry solids it makes.
    fn coagulation(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        let coagulant = self.coagulant(request)?;
        let dose = measured(request, "jar-dose")?;
        let input = CoagulationInput {
            coagulant,
            dose,
            raw_alkalinity: measured(request, "alkalinity")?,
            residual_alkalinity_setpoint: value(request, "alkalinity-setpoint")?,
            alkali: alkali_of(request.mode),
            alkali_purity_percent: 100.0,
        };
        let water = WaterState::new(&WaterInput::new(
            value(request, "ph")?,
            value(request, "temperature")?,
            value(request, "alkalinity")?,
        ))?;
        // Every coagulant has a water-engine chemical (PACl is built for its basicity), so the
        // pH after it always comes from the equilibrium.
        let mut c = coagulation_in_water(&self.catalog, &input, &water, PhRange::default())?;
        let solids = sludge(
            &self.catalog,
            &SludgeInput {
                flow: flow(request)?,
                coagulant,
                dose,
                suspended_solids_mg_l: 0.0,
                additives_mg_l: 0.0,
            },
        )?;
        let r = self.feed_for(request, dose)?;
        let mut traces = std::mem::take(&mut c.traces);
        traces.extend(solids.traces.iter().cloned());
        let mut out = outcome_of_feed(self.name_key(request), &r, traces, c.cautions.clone());
        let mut extra = |key, value, quantity| {
            out.extras.push(Extra {
                key,
                value,
                quantity,
            })
        };
        extra(
            "alkalinity-consumed",
            c.alkalinity_consumed_mg_l,
            Q::AsCaCO3,
        );
        extra(
            "alkalinity-remaining",
            c.alkalinity_remaining_mg_l.max(0.0),
            Q::AsCaCO3,
        );
        if let Some(w) = &c.water {
            extra("ph-after-coagulant", w.ph_after, Q::Ph);
        }
        if c.alkali_mg_l > 0.0 {
            extra("supplemental-alkali", c.alkali_mg_l, Q::Concentration);
            if let Some(w) = &c.water_with_alkali {
                extra("ph-after-alkali", w.ph_after, Q::Ph);
            }
        }
        extra(
            "coagulant-solids",
            solids.dry_solids_kg_per_day,
            Q::MassPerDay,
        );
        Ok(out)
    }

    /// Lime–soda softening: lime and soda ash from the tap analysis (free CO2 from the water
    /// engine), each with its daily feed as delivered.
    fn softening(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        let lime_id = self.chosen(request)?.to_string();
        let water = WaterState::new(&WaterInput::new(
            value(request, "ph")?,
            value(request, "temperature")?,
            value(request, "alkalinity")?,
        ))?;
        let co2 = water.result()?.co2_mg_l;
        let ph_figures = request.figures("ph");
        let (removal, mut traces) = removal_from_analysis(&HardnessAnalysis {
            total_hardness: measured(request, "total-hardness")?,
            calcium_hardness: measured(request, "calcium-hardness")?,
            alkalinity: measured(request, "alkalinity")?,
            co2: Measured {
                value: co2,
                sig_figs: combine(ph_figures, request.figures("alkalinity")),
            },
        })?;
        let lime_purity = measured(request, "lime-purity")?;
        let soda_purity = measured(request, "soda-ash-purity")?;
        let s = softening(
            &self.catalog,
            &removal.input(
                value(request, "excess-lime")?,
                lime_purity.value,
                soda_purity.value,
            ),
        )?;
        traces.extend(s.traces.iter().cloned());
        let quick = lime_id == "quicklime";
        let lime_dose = if quick {
            s.lime_cao_mg_l
        } else {
            s.lime_caoh2_mg_l
        };
        // Lime is a sum of terms, each a removal times a derived factor.
        let terms = [
            (removal.co2, s.cao_per_co2),
            (removal.carbonate_hardness, s.cao_per_alkalinity),
            (removal.magnesium, s.cao_per_mg),
        ]
        .map(|(m, f)| Measured {
            value: m.value * f,
            sig_figs: m.sig_figs,
        });
        let mut with_excess = terms.to_vec();
        with_excess.push(measured(request, "excess-lime")?);
        let lime_figures = sum_figures(&with_excess, s.lime_cao_mg_l);
        // The lime feeder's setting when its full scale is given; soda ash has its own
        // feeder, not asked for here.
        let lime_feeder = request
            .get("lime-feeder-capacity")
            .map(|capacity| PumpKind::DryFeeder {
                capacity,
                unit: MassRateUnit::KgPerDay,
            });
        let dry_feed = |product: &str, dose: Measured, purity: Measured, pump: Option<PumpKind>| {
            feed(
                &self.catalog,
                &FeedInput {
                    flow: flow(request)?,
                    dose,
                    product: product.to_string(),
                    strength: Strength::new(purity, StrengthBasis::Purity, None),
                    pump,
                    usable_range: UsableRange::default(),
                    // The site's level belongs to the lime chosen, not to the soda ash.
                    max_use_level_mg_l: request
                        .max_use_level_mg_l
                        .filter(|_| request.product.as_deref() == Some(product)),
                },
            )
        };
        let lime = dry_feed(
            &lime_id,
            Measured {
                value: lime_dose,
                sig_figs: lime_figures,
            },
            lime_purity,
            lime_feeder,
        )?;
        let mut cautions = s.cautions.clone();
        let mut soda_feed = None;
        if s.soda_ash_mg_l > 0.0 {
            let soda = dry_feed(
                SODA_ASH,
                Measured {
                    value: s.soda_ash_mg_l,
                    sig_figs: removal.non_carbonate_hardness.sig_figs,
                },
                soda_purity,
                None,
            )?;
            traces.extend(soda.traces.iter().cloned());
            cautions.extend(soda.cautions.iter().cloned());
            soda_feed = Some(soda);
        }
        let mut out = outcome_of_feed(self.name_key(request), &lime, traces, cautions);
        let mut extra = |key, value, quantity| {
            out.extras.push(Extra {
                key,
                value,
                quantity,
            })
        };
        extra("lime-as-delivered", lime.product_kg_per_day, Q::MassPerDay);
        extra("soda-ash-dose", s.soda_ash_mg_l, Q::Concentration);
        if let Some(soda) = &soda_feed {
            extra(
                "soda-ash-as-delivered",
                soda.product_kg_per_day,
                Q::MassPerDay,
            );
        }
        extra("free-co2", co2, Q::Concentration);
        extra(
            "magnesium-removed",
            removal.magnesium.value,
            Q::Concentration,
        );
        extra(
            "non-carbonate-hardness",
            removal.non_carbonate_hardness.value,
            Q::AsCaCO3,
        );
        let softened = self.softened_water(request, s.lime_caoh2_mg_l, s.soda_ash_mg_l)?;
        extra("ph-softened", softened.water.ph, Q::Index);
        extra(
            "hardness-softened",
            softened.calcium_hardness_mg_l_as_caco3 + softened.magnesium_hardness_mg_l_as_caco3,
            Q::AsCaCO3,
        );
        Ok(out)
    }

    /// The water the doses would leave at equilibrium: the analysis as a water (calcium and
    /// magnesium from the hardness readings), the soda ash dissolved, then the lime added with
    /// calcite and brucite precipitating (`water::soften`). Lime is counted as Ca(OH)2 whether
    /// it is fed hydrated or as quicklime: slaking makes the one from the other, mole for mole.
    fn softened_water(
        &self,
        request: &CalcRequest,
        lime_caoh2_mg_l: f64,
        soda_ash_mg_l: f64,
    ) -> Result<water::Softened, Error> {
        let total = value(request, "total-hardness")?;
        let calcium = value(request, "calcium-hardness")?;
        let water = WaterState::new(
            &WaterInput::new(
                value(request, "ph")?,
                value(request, "temperature")?,
                value(request, "alkalinity")?,
            )
            .with_calcium_as_caco3(calcium)
            .with_magnesium_as_caco3(total - calcium),
        )?;
        let chemicals = water::Catalog::embedded()?;
        let with_soda = water.dosed(
            chemicals.find("soda-ash")?,
            soda_ash_mg_l,
            Precipitation::None,
        )?;
        water::soften(&with_soda, chemicals.find("lime")?, lime_caoh2_mg_l)
    }

    /// Pump cross-check: the dose a drawdown actually delivers, and the setting to reach the
    /// target. "Dose" shows the measured (actual) dose; "pump setting" the suggested one.
    fn pump_check(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        let (product, strength) = self.product_strength(request)?;
        let r = pump_check(
            &self.catalog,
            &PumpCheckInput {
                measurement: Measurement::Drawdown {
                    ml: measured(request, "drawdown-volume")?,
                    seconds: measured(request, "drawdown-time")?,
                },
                flow: flow(request)?,
                product,
                strength,
                target_dose: measured(request, "dose")?,
                current_setting_percent: Some(value(request, "pump-setting")?),
                tolerance: Tolerance::default(),
            },
        )?;
        Ok(CalcOutcome {
            chemical: self.name_key(request),
            dose_mg_per_l: Some(r.actual_dose_mg_l),
            feed_kg_per_day: Some(r.active_kg_per_day),
            product_l_per_hour: Some(r.product_l_per_day / 24.0),
            product_kg_per_day: None,
            pump_setting_percent: r.suggested_setting_percent,
            extras: Vec::new(),
            figures: figures_of(&r.traces),
            trace: trace_lines(&r.traces),
            cautions: cautions(&r.cautions),
        })
    }
}

/// The supplemental alkali a coagulation mode stands for.
fn alkali_of(mode: CalcMode) -> Alkali {
    match mode {
        CalcMode::AlkaliLime => Alkali::HydratedLime,
        CalcMode::AlkaliSodaAsh => Alkali::SodaAsh,
        _ => Alkali::Caustic,
    }
}

fn value(request: &CalcRequest, name: &str) -> Result<f64, Error> {
    request.get(name).ok_or_else(|| {
        Error::new(ErrorKind::InvalidInput, format!("{name} is missing"))
            .with("quantity", name.to_string())
    })
}

/// A typed input with the significant figures it was typed with.
fn measured(request: &CalcRequest, name: &str) -> Result<Measured, Error> {
    Ok(Measured {
        value: value(request, name)?,
        sig_figs: request.figures(name),
    })
}

fn flow(request: &CalcRequest) -> Result<Flow, Error> {
    Ok(Flow::new(measured(request, "flow")?, FlowUnit::M3d))
}

/// The least precise measured input along any of the traces.
fn figures_of(traces: &[NamedTrace]) -> Option<u8> {
    traces
        .iter()
        .fold(None, |acc, t| combine(acc, t.trace.sig_figs()))
}

/// The engine's traces as "show the work" lines: a heading per trace, each step beside the
/// origin of its factor, then the rounded result.
fn trace_lines(traces: &[NamedTrace]) -> Vec<TraceLine> {
    let mut lines = Vec::new();
    for t in traces {
        lines.push(TraceLine::Heading(t.label.to_string()));
        let texts = dosing::step_lines(&t.trace);
        let origins = t.trace.steps.iter().map(|s| origin_of(&s.origin));
        for (i, text) in texts.into_iter().enumerate() {
            let origin = if t.trace.steps.is_empty() {
                origin_of(&t.trace.start_origin)
            } else {
                origins.clone().nth(i).flatten()
            };
            lines.push(TraceLine::Step { text, origin });
        }
        if t.trace.sig_figs().is_some() {
            lines.push(TraceLine::Result(format!("≈ {}", t.trace.display_result())));
        }
    }
    lines
}

fn origin_of(origin: &Origin) -> Option<StepOrigin> {
    let (code, detail) = match origin {
        Origin::Measured => ("measured", String::new()),
        Origin::MolarMass { formula } => ("molar-mass", formula.clone()),
        Origin::MoleRatio { reaction } => ("mole-ratio", reaction.clone()),
        Origin::UnitDefinition => ("unit-definition", String::new()),
        Origin::Product { name } => ("product", name.clone()),
        Origin::Constant { source } => ("constant", source.clone()),
        Origin::Equilibrium => ("equilibrium", String::new()),
    };
    Some(StepOrigin { code, detail })
}

/// A feed result as the card shows it, after the steps (if any) that led to its dose.
fn outcome_of_feed(
    chemical: String,
    r: &FeedResult,
    mut traces: Vec<NamedTrace>,
    mut before: Vec<dosing::Caution>,
) -> CalcOutcome {
    traces.extend(r.traces.iter().cloned());
    before.extend(r.cautions.iter().cloned());
    CalcOutcome {
        chemical,
        dose_mg_per_l: Some(r.dose_mg_l),
        feed_kg_per_day: Some(r.active_kg_per_day),
        product_l_per_hour: r.product_l_per_h,
        product_kg_per_day: Some(r.product_kg_per_day),
        pump_setting_percent: r.pump.as_ref().map(|p| p.percent),
        extras: Vec::new(),
        figures: figures_of(&traces),
        trace: trace_lines(&traces),
        cautions: cautions(&dosing::caution::finish(before)),
    }
}

/// A catalog product as a choice, with the form that decides its inputs.
fn choice(p: &crate::engine::dosing::catalog::Product) -> ProductChoice {
    ProductChoice {
        id: p.id.clone(),
        name_key: p.name_key.clone(),
        form: match p.form {
            Form::Solution => FeedForm::Liquid,
            Form::Gas => FeedForm::Gas,
            Form::Dry => FeedForm::Dry,
        },
    }
}

/// Engine cautions as the UI carries them; the advisory one is shown by the card itself.
fn cautions(list: &[dosing::Caution]) -> Vec<Caution> {
    list.iter()
        .filter(|c| c.key != "advisory-operator-decides")
        .map(|c| Caution {
            level: match c.severity {
                Severity::Info => CautionLevel::Info,
                Severity::Warning => CautionLevel::Warning,
                Severity::Danger => CautionLevel::Danger,
            },
            code: c.key.clone(),
            message: if c.params.is_empty() {
                c.key.clone()
            } else {
                let params: Vec<String> =
                    c.params.iter().map(|(k, v)| format!("{k} = {v}")).collect();
                format!("{} ({})", c.key, params.join(", "))
            },
            params: c.params.clone(),
        })
        .collect()
}

impl CalcEngine for DosingEngine {
    fn titration_curve(&self, request: &CalcRequest) -> Result<Curve, SeamError> {
        let (state, chemical, max, precipitation) = match request.kind {
            CalcKind::PhControl => {
                let (state, chemical) = self.water_and_chemical(request)?;
                let target = value(request, "ph-target")?;
                // Draw to twice the dose that reaches the target, so the target sits mid-curve.
                let max = water::dose_for_ph(&state, chemical, target, Precipitation::None)
                    .map_or(100.0, |d| (2.0 * d.dose_mg_l).max(1.0));
                (state, chemical, max, Precipitation::None)
            }
            CalcKind::Coagulation => {
                let coagulant = self.coagulant(request)?;
                let dose = value(request, "jar-dose")?;
                // mg/L of the engine's compound per mg/L dosed: a factor, so a zero dose
                // cannot make it 0/0.
                let (chemical, per_dose) = coagulant_chemical(coagulant, 1.0)?;
                let mg_l = dose * per_dose;
                let state = WaterState::new(&WaterInput::new(
                    value(request, "ph")?,
                    value(request, "temperature")?,
                    value(request, "alkalinity")?,
                ))?;
                // x stays in the coagulant as dosed: scale the engine's compound back to it.
                let points = water::curve(
                    &state,
                    &chemical,
                    2.0 * mg_l.max(1.0),
                    CURVE_POINTS,
                    Precipitation::Hydroxide,
                )?;
                return Ok(Curve {
                    titrant: self.name_key(request),
                    points: points
                        .iter()
                        .map(|p| (p.dose_mg_l / per_dose, p.ph))
                        .collect(),
                });
            }
            _ => return Err(SeamError::NotConnected),
        };
        let points = water::curve(&state, chemical, max, CURVE_POINTS, precipitation)?;
        Ok(Curve {
            titrant: self.name_key(request),
            points: points.iter().map(|p| (p.dose_mg_l, p.ph)).collect(),
        })
    }

    fn products(&self, kind: CalcKind, mode: CalcMode) -> Vec<ProductChoice> {
        match (kind, mode) {
            (CalcKind::PhControl, _) => self.listed(&PH_CHEMICALS.map(|(_, product)| product)),
            (CalcKind::Coagulation, _) => self.listed(&COAGULANTS),
            (CalcKind::Softening, _) => self.listed(&LIMES),
            (CalcKind::FeedSetting, _) => self.offered(None),
            // A drawdown test measures a liquid's volume.
            (CalcKind::PumpCheck, _) => self.solution_products(None),
            (CalcKind::Chlorination, CalcMode::FreeChlorine) => self.offered(Some(&["Cl2"])),
            (CalcKind::Chlorination, CalcMode::Chloramine) => self.offered(Some(&["N"])),
            (CalcKind::Chlorination, CalcMode::Dechlorination) => {
                self.offered(Some(&DECHLOR_AGENTS))
            }
            _ => Vec::new(),
        }
    }

    fn compute(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        match (request.kind, request.mode) {
            (CalcKind::FeedSetting, _) => self.feed_setting(request),
            (CalcKind::PhControl, _) => self.ph_control(request),
            (CalcKind::Chlorination, CalcMode::FreeChlorine) => self.free_chlorine(request),
            (CalcKind::Chlorination, CalcMode::Chloramine) => self.chloramine(request),
            (CalcKind::Chlorination, CalcMode::Dechlorination) => self.dechlorination(request),
            (CalcKind::Coagulation, _) => self.coagulation(request),
            (CalcKind::Softening, _) => self.softening(request),
            (CalcKind::PumpCheck, _) => self.pump_check(request),
            _ => Err(SeamError::NotConnected),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::app::seams::CalcMode;
    use std::collections::BTreeMap;

    fn feed_request(product: &str, dose: f64) -> CalcRequest {
        CalcRequest {
            kind: CalcKind::FeedSetting,
            mode: CalcMode::Standard,
            product: Some(product.into()),
            values: BTreeMap::from([
                ("flow", 9084.99),
                ("dose", dose),
                ("strength", 12.5),
                ("specific-gravity", 1.2),
                ("pump-capacity", 15.0),
            ]),
            figures: BTreeMap::new(),
            max_use_level_mg_l: None,
        }
    }

    /// Free chlorination with hypochlorite on the feed request's flow and product numbers.
    fn free_chlorine_request(demand: f64, residual: f64) -> CalcRequest {
        let mut req = feed_request("sodium-hypochlorite", 0.0);
        req.kind = CalcKind::Chlorination;
        req.mode = CalcMode::FreeChlorine;
        req.values.remove("dose");
        req.values.insert("chlorine-demand", demand);
        req.values.insert("residual-target", residual);
        req
    }

    #[test]
    fn feed_setting_is_the_engines_feed_result() {
        let engine = DosingEngine::new().expect("built-in catalog");
        let products = engine.products(CalcKind::FeedSetting, CalcMode::Standard);
        assert!(products.iter().any(|p| p.id == "sodium-hypochlorite"));

        let out = engine
            .compute(&feed_request("sodium-hypochlorite", 2.5))
            .expect("a result");
        // The adapter must hand over the engine's own numbers, unchanged.
        let direct = feed(
            &engine.catalog,
            &FeedInput {
                flow: Flow::new(Measured::exact(9084.99), FlowUnit::M3d),
                dose: Measured::exact(2.5),
                product: "sodium-hypochlorite".into(),
                strength: Strength::new(
                    Measured::exact(12.5),
                    engine
                        .catalog
                        .product("sodium-hypochlorite")
                        .unwrap()
                        .strengths[0]
                        .basis,
                    Some(Measured::exact(1.2)),
                ),
                pump: Some(PumpKind::Metering {
                    capacity: 15.0,
                    unit: VolumeRateUnit::Lph,
                }),
                usable_range: UsableRange::default(),
                max_use_level_mg_l: None,
            },
        )
        .unwrap();
        assert_eq!(out.dose_mg_per_l, Some(direct.dose_mg_l));
        assert_eq!(out.feed_kg_per_day, Some(direct.active_kg_per_day));
        assert_eq!(out.product_l_per_hour, direct.product_l_per_h);
        assert_eq!(out.pump_setting_percent, direct.pump.map(|p| p.percent));
        assert_eq!(out.chemical, "product-sodium-hypochlorite");
        assert!(!out.trace.is_empty());
        assert!(
            !out.cautions
                .iter()
                .any(|c| c.code == "advisory-operator-decides")
        );
        assert!(out.cautions.iter().any(|c| c.level == CautionLevel::Danger));
    }

    #[test]
    fn free_chlorine_dose_comes_from_the_chlorine_engine() {
        let engine = DosingEngine::new().unwrap();
        let mut request = free_chlorine_request(1.4, 1.0);
        assert!(
            engine
                .products(CalcKind::Chlorination, CalcMode::FreeChlorine)
                .iter()
                .all(|p| engine.catalog.product(&p.id).unwrap().dose_as == "Cl2")
        );
        let out = engine.compute(&request).expect("a result");
        let direct = chlorine_dose(
            &engine.catalog,
            &ChlorineInput {
                demand: Measured::exact(1.4),
                residual: Measured::exact(1.0),
                ammonia_n: None,
                residual_limit_mg_l: None,
            },
        )
        .unwrap();
        assert_eq!(out.dose_mg_per_l, Some(direct.dose_mg_l));
        let fed = engine
            .feed_for(&request, Measured::exact(direct.dose_mg_l))
            .unwrap();
        assert_eq!(out.feed_kg_per_day, Some(fed.active_kg_per_day));
        request.kind = CalcKind::FeedSetting;
        request.mode = CalcMode::Standard;
        assert_eq!(
            engine.titration_curve(&request),
            Err(SeamError::NotConnected),
            "no curve for a feed setting"
        );
    }

    #[test]
    fn chloramine_and_dechlorination_doses_come_from_the_engine() {
        let engine = DosingEngine::new().unwrap();
        let ammonia = engine.products(CalcKind::Chlorination, CalcMode::Chloramine);
        assert!(
            ammonia.iter().any(|p| p.id == "aqua-ammonia"),
            "{ammonia:?}"
        );
        let mut request = feed_request("aqua-ammonia", 0.0);
        request.kind = CalcKind::Chlorination;
        request.mode = CalcMode::Chloramine;
        request.values.remove("dose");
        request.values.insert("chlorine-dose", 4.0);
        request.values.insert("cl2-n-ratio", 4.5);
        request.values.insert("strength", 19.0);
        request.values.insert("specific-gravity", 0.93);
        let out = engine.compute(&request).expect("chloramine result");
        let direct =
            chloramination(&engine.catalog, Measured::exact(4.0), Measured::exact(4.5)).unwrap();
        assert_eq!(out.dose_mg_per_l, Some(direct.ammonia_n_mg_l));

        let agents = engine.products(CalcKind::Chlorination, CalcMode::Dechlorination);
        assert!(
            agents.iter().any(|p| p.id == "sodium-bisulfite"),
            "{agents:?}"
        );
        let mut request = feed_request("sodium-bisulfite", 0.0);
        request.kind = CalcKind::Chlorination;
        request.mode = CalcMode::Dechlorination;
        request.values.remove("dose");
        request.values.insert("residual-in", 2.0);
        request.values.insert("strength", 38.0);
        request.values.insert("specific-gravity", 1.36);
        let out = engine.compute(&request).expect("dechlorination result");
        let direct =
            dechlorination(&engine.catalog, Measured::exact(2.0), "sodium-bisulfite").unwrap();
        assert_eq!(out.dose_mg_per_l, Some(direct.agent_mg_l));
    }

    #[test]
    fn ph_chemicals_pair_the_same_compound_in_both_catalogs() {
        let engine = DosingEngine::new().unwrap();
        for (water_id, product_id) in PH_CHEMICALS {
            let chemical = water::Catalog::embedded().unwrap().find(water_id).unwrap();
            let product = engine.catalog.product(product_id).unwrap();
            let formula = crate::engine::formula::Formula::parse(&product.dose_as).unwrap();
            assert_eq!(chemical.formula, formula, "{water_id} vs {product_id}");
        }
    }

    #[test]
    fn ph_adjustment_dose_and_curve_come_from_the_water_engine() {
        let engine = DosingEngine::new().unwrap();
        let mut request = feed_request("sodium-hydroxide", 0.0);
        request.kind = CalcKind::PhControl;
        request.values.remove("dose");
        for (k, v) in [
            ("ph-raw", 6.7),
            ("ph-target", 7.3),
            ("alkalinity", 38.0),
            ("temperature", 15.0),
            ("strength", 25.0),
            ("specific-gravity", 1.27),
        ] {
            request.values.insert(k, v);
        }
        let out = engine.compute(&request).expect("a pH result");
        let state = WaterState::new(&WaterInput::new(6.7, 15.0, 38.0)).unwrap();
        let caustic = water::Catalog::embedded().unwrap().find("caustic").unwrap();
        let direct = water::dose_for_ph(&state, caustic, 7.3, Precipitation::None).unwrap();
        assert_eq!(out.dose_mg_per_l, Some(direct.dose_mg_l));
        assert!(out.feed_kg_per_day.is_some());
        let curve = engine.titration_curve(&request).expect("a curve");
        assert_eq!(curve.points.len(), CURVE_POINTS);
        assert_eq!(curve.points[0].0, 0.0);
        assert!(
            (curve.points[0].1 - state.ph()).abs() < 1e-9,
            "{:?}",
            curve.points[0]
        );
        assert!(
            curve.points.windows(2).all(|w| w[1].1 >= w[0].1),
            "caustic raises pH"
        );
        // Acid the other way: an unreachable target is the engine's refusal, not a number.
        request.product = Some("sulfuric-acid".into());
        let err = engine.compute(&request);
        assert!(
            matches!(&err, Err(SeamError::Engine(e)) if e.kind() == ErrorKind::Unreachable),
            "{err:?}"
        );
    }

    #[test]
    fn pump_check_reports_the_measured_dose() {
        let engine = DosingEngine::new().unwrap();
        let mut request = feed_request("sodium-hypochlorite", 2.5);
        request.kind = CalcKind::PumpCheck;
        request.values.remove("pump-capacity");
        request.values.insert("drawdown-volume", 250.0);
        request.values.insert("drawdown-time", 60.0);
        request.values.insert("pump-setting", 40.0);
        let out = engine.compute(&request).expect("a result");
        let (product, strength) = engine.product_strength(&request).unwrap();
        let direct = pump_check(
            &engine.catalog,
            &PumpCheckInput {
                measurement: Measurement::Drawdown {
                    ml: Measured::exact(250.0),
                    seconds: Measured::exact(60.0),
                },
                flow: Flow::new(Measured::exact(9084.99), FlowUnit::M3d),
                product,
                strength,
                target_dose: Measured::exact(2.5),
                current_setting_percent: Some(40.0),
                tolerance: Tolerance::default(),
            },
        )
        .unwrap();
        assert_eq!(out.dose_mg_per_l, Some(direct.actual_dose_mg_l));
        assert_eq!(out.pump_setting_percent, direct.suggested_setting_percent);
        assert!(
            out.cautions
                .iter()
                .any(|c| c.code.starts_with("pump-check-"))
        );
    }

    #[test]
    fn engine_refusals_and_gaps_pass_through() {
        let engine = DosingEngine::new().unwrap();
        let err = engine.compute(&feed_request("sodium-hypochlorite", -1.0));
        assert!(matches!(err, Err(SeamError::Engine(_))), "{err:?}");
        let err = engine.compute(&feed_request("no-such-product", 1.0));
        assert!(
            matches!(&err, Err(SeamError::Engine(e)) if e.kind() == ErrorKind::UnknownChemical),
            "{err:?}"
        );
        let mut other = feed_request("sodium-hypochlorite", 1.0);
        other.kind = CalcKind::Softening;
        let err = engine.compute(&other);
        assert!(
            matches!(&err, Err(SeamError::Engine(e)) if e.kind() == ErrorKind::InvalidInput),
            "softening without its inputs: {err:?}"
        );
    }

    fn request(
        kind: CalcKind,
        mode: CalcMode,
        product: &str,
        values: &[(&'static str, f64)],
    ) -> CalcRequest {
        CalcRequest {
            kind,
            mode,
            product: Some(product.into()),
            values: values.iter().copied().collect(),
            figures: BTreeMap::new(),
            max_use_level_mg_l: None,
        }
    }

    fn extra(out: &CalcOutcome, key: &str) -> Option<f64> {
        out.extras.iter().find(|e| e.key == key).map(|e| e.value)
    }

    fn coagulation_request(product: &str, mode: CalcMode, setpoint: f64) -> CalcRequest {
        request(
            CalcKind::Coagulation,
            mode,
            product,
            &[
                ("flow", 9084.99),
                ("jar-dose", 30.0),
                ("alkalinity", 40.0),
                ("alkalinity-setpoint", setpoint),
                ("ph", 7.2),
                ("temperature", 12.0),
                ("strength", 8.3),
                ("specific-gravity", 1.335),
                ("pump-capacity", 60.0),
            ],
        )
    }

    #[test]
    fn coagulation_comes_from_the_hydrolysis_and_the_water_engine() {
        let engine = DosingEngine::new().unwrap();
        let offered = engine.products(CalcKind::Coagulation, CalcMode::AlkaliCaustic);
        assert_eq!(
            offered.iter().map(|p| p.id.as_str()).collect::<Vec<_>>(),
            COAGULANTS
        );
        let req = coagulation_request("alum-liquid", CalcMode::AlkaliCaustic, 30.0);
        let out = engine.compute(&req).expect("a coagulation result");
        let input = CoagulationInput {
            coagulant: Coagulant::Alum14,
            dose: Measured::exact(30.0),
            raw_alkalinity: Measured::exact(40.0),
            residual_alkalinity_setpoint: 30.0,
            alkali: Alkali::Caustic,
            alkali_purity_percent: 100.0,
        };
        let water = WaterState::new(&WaterInput::new(7.2, 12.0, 40.0)).unwrap();
        let direct =
            coagulation_in_water(&engine.catalog, &input, &water, PhRange::default()).unwrap();
        assert_eq!(out.dose_mg_per_l, Some(30.0));
        assert_eq!(
            extra(&out, "alkalinity-consumed"),
            Some(direct.alkalinity_consumed_mg_l)
        );
        assert_eq!(extra(&out, "supplemental-alkali"), Some(direct.alkali_mg_l));
        let after = extra(&out, "ph-after-coagulant").expect("alum is modelled");
        let with_alkali = extra(&out, "ph-after-alkali").expect("alkali needed for 30 mg/L");
        assert!(after < 7.2 && with_alkali > after, "{after} {with_alkali}");
        let fed = engine.feed_for(&req, Measured::exact(30.0)).unwrap();
        assert_eq!(out.feed_kg_per_day, Some(fed.active_kg_per_day));
        assert_eq!(out.pump_setting_percent, fed.pump.map(|p| p.percent));
        assert!(extra(&out, "coagulant-solids").unwrap() > 0.0);
        assert!(
            out.trace
                .contains(&TraceLine::Heading("alkalinity-per-dose".into()))
        );

        // Lime as the alkali: a different alkali dose for the same deficit.
        let lime = engine
            .compute(&coagulation_request(
                "alum-liquid",
                CalcMode::AlkaliLime,
                30.0,
            ))
            .unwrap();
        assert_ne!(
            extra(&lime, "supplemental-alkali"),
            extra(&out, "supplemental-alkali")
        );
        // Enough alkalinity: no alkali and no pH after it.
        let enough = engine
            .compute(&coagulation_request(
                "alum-liquid",
                CalcMode::AlkaliCaustic,
                10.0,
            ))
            .unwrap();
        assert_eq!(extra(&enough, "supplemental-alkali"), None);
        assert_eq!(extra(&enough, "ph-after-alkali"), None);
    }

    #[test]
    fn pacl_lowers_the_ph_less_than_alum_for_the_same_aluminium() {
        let engine = DosingEngine::new().unwrap();
        let mut pacl = coagulation_request("pacl", CalcMode::AlkaliCaustic, 10.0);
        pacl.values.insert("jar-dose", 3.0);
        pacl.values.insert("strength", 10.5);
        pacl.values.insert("specific-gravity", 1.2);
        let pacl = engine.compute(&pacl).expect("PACl result");
        // The same 3 mg/L of aluminium as alum·14H2O, from molar masses.
        let alum_mg_l = 3.0
            / crate::engine::formula::Formula::parse("Al")
                .unwrap()
                .molar_mass()
            / 2.0
            * crate::engine::formula::Formula::parse("Al2(SO4)3·14H2O")
                .unwrap()
                .molar_mass();
        let mut alum = coagulation_request("alum-liquid", CalcMode::AlkaliCaustic, 10.0);
        alum.values.insert("jar-dose", alum_mg_l);
        let alum = engine.compute(&alum).expect("alum result");
        let ph = |o: &CalcOutcome| extra(o, "ph-after-coagulant").expect("modelled");
        assert!(
            7.2 > ph(&pacl) && ph(&pacl) > ph(&alum),
            "PACl {} alum {}",
            ph(&pacl),
            ph(&alum)
        );
        assert!(
            extra(&pacl, "alkalinity-consumed").unwrap()
                < extra(&alum, "alkalinity-consumed").unwrap()
        );
        assert!(
            !pacl
                .cautions
                .iter()
                .any(|c| c.code == "give-water-for-ph-effect"
                    || c.code == "coagulant-ph-not-modelled")
        );
    }

    #[test]
    fn coagulation_curve_falls_from_the_raw_ph() {
        let engine = DosingEngine::new().unwrap();
        let req = coagulation_request("ferric-chloride", CalcMode::AlkaliCaustic, 10.0);
        let curve = engine.titration_curve(&req).expect("a coagulation curve");
        assert_eq!(curve.points.len(), CURVE_POINTS);
        assert!(
            (curve.points[0].1 - 7.2).abs() < 1e-6,
            "{:?}",
            curve.points[0]
        );
        assert!((curve.points.last().unwrap().0 - 60.0).abs() < 1e-6);
        assert!(curve.points.windows(2).all(|w| w[1].1 <= w[0].1 + 1e-9));
    }

    #[test]
    fn softening_comes_from_the_analysis_and_the_lime_soda_method() {
        let engine = DosingEngine::new().unwrap();
        let values = [
            ("flow", 4000.0),
            ("total-hardness", 260.0),
            ("calcium-hardness", 190.0),
            ("alkalinity", 180.0),
            ("ph", 7.6),
            ("temperature", 14.0),
            ("excess-lime", 35.0),
            ("lime-purity", 93.0),
            ("soda-ash-purity", 98.0),
        ];
        let req = request(
            CalcKind::Softening,
            CalcMode::Standard,
            "hydrated-lime",
            &values,
        );
        let out = engine.compute(&req).expect("a softening result");
        let co2 = WaterState::new(&WaterInput::new(7.6, 14.0, 180.0))
            .unwrap()
            .result()
            .unwrap()
            .co2_mg_l;
        let (removal, _) = removal_from_analysis(&HardnessAnalysis {
            total_hardness: Measured::exact(260.0),
            calcium_hardness: Measured::exact(190.0),
            alkalinity: Measured::exact(180.0),
            co2: Measured::exact(co2),
        })
        .unwrap();
        let direct = softening(&engine.catalog, &removal.input(35.0, 93.0, 98.0)).unwrap();
        assert_eq!(out.dose_mg_per_l, Some(direct.lime_caoh2_mg_l));
        assert_eq!(extra(&out, "soda-ash-dose"), Some(direct.soda_ash_mg_l));
        assert_eq!(extra(&out, "free-co2"), Some(co2));
        assert_eq!(removal.non_carbonate_hardness.value, 80.0);
        assert_eq!(out.product_l_per_hour, None, "dry feed: no volume");
        assert_eq!(out.pump_setting_percent, None);
        let quick = engine
            .compute(&request(
                CalcKind::Softening,
                CalcMode::Standard,
                "quicklime",
                &values,
            ))
            .unwrap();
        assert_eq!(quick.dose_mg_per_l, Some(direct.lime_cao_mg_l));
        // The equilibrium end point: the same water through the water engine directly.
        let chemicals = water::Catalog::embedded().unwrap();
        let raw = WaterState::new(
            &WaterInput::new(7.6, 14.0, 180.0)
                .with_calcium_as_caco3(190.0)
                .with_magnesium_as_caco3(70.0),
        )
        .unwrap();
        let soda = raw
            .dosed(
                chemicals.find("Na2CO3").unwrap(),
                direct.soda_ash_mg_l,
                Precipitation::None,
            )
            .unwrap();
        let end = water::soften(
            &soda,
            chemicals.find("Ca(OH)2").unwrap(),
            direct.lime_caoh2_mg_l,
        )
        .unwrap();
        assert_eq!(extra(&out, "ph-softened"), Some(end.water.ph));
        assert_eq!(
            extra(&out, "hardness-softened"),
            Some(end.calcium_hardness_mg_l_as_caco3 + end.magnesium_hardness_mg_l_as_caco3)
        );
        // Excess lime takes the water past pH 10 and most of the hardness out.
        assert!(end.water.ph > 10.0, "{}", end.water.ph);
        assert!(extra(&out, "hardness-softened").unwrap() < 100.0);
        // Quicklime is the same moles of lime: the same end point.
        assert_eq!(extra(&quick, "ph-softened"), Some(end.water.ph));
    }

    #[test]
    fn typed_figures_limit_the_result() {
        let engine = DosingEngine::new().unwrap();
        let mut req = free_chlorine_request(1.4, 1.05);
        for (name, n) in [
            ("flow", 4),
            ("chlorine-demand", 2),
            ("residual-target", 3),
            ("strength", 3),
            ("specific-gravity", 4),
            ("pump-capacity", 3),
        ] {
            req.figures.insert(name, n);
        }
        // 1.4 + 1.05 is known to the tenths: 2.5, two figures.
        assert_eq!(engine.compute(&req).unwrap().figures, Some(2));
        req.values.insert("chlorine-demand", 1.40);
        req.figures.insert("chlorine-demand", 3);
        assert_eq!(engine.compute(&req).unwrap().figures, Some(3));
        req.figures.clear();
        assert_eq!(
            engine.compute(&req).unwrap().figures.filter(|&f| f < 4),
            None,
            "exact inputs leave only the molar masses' figures"
        );
    }

    #[test]
    fn ammonia_in_the_water_adds_the_breakpoint_dose() {
        let engine = DosingEngine::new().unwrap();
        let mut req = free_chlorine_request(1.2, 1.0);
        let without = engine.compute(&req).unwrap();
        assert_eq!(extra(&without, "breakpoint-dose"), None);
        req.values.insert("ammonia-n", 0.4);
        let with = engine.compute(&req).unwrap();
        let ratio =
            crate::engine::dosing::chlorine::chlorine_per_ammonia_n(&engine.catalog, "breakpoint")
                .unwrap()
                .0;
        let bp = extra(&with, "breakpoint-dose").expect("breakpoint shown");
        assert!((bp - 0.4 * ratio).abs() < 1e-12);
        assert!((with.dose_mg_per_l.unwrap() - (2.2 + 0.4 * ratio)).abs() < 1e-9);
        assert!(
            with.trace
                .contains(&TraceLine::Heading("breakpoint-dose".into()))
        );
        assert!(
            with.cautions
                .iter()
                .any(|c| c.code == "breakpoint-practice-range")
        );
    }

    #[test]
    fn calcium_adds_the_langelier_index_and_ccpp_after_the_dose() {
        let engine = DosingEngine::new().unwrap();
        let mut req = request(
            CalcKind::PhControl,
            CalcMode::Standard,
            "sodium-hydroxide",
            &[
                ("flow", 4000.0),
                ("ph-raw", 7.0),
                ("ph-target", 8.2),
                ("alkalinity", 90.0),
                ("temperature", 18.0),
                ("strength", 25.0),
                ("specific-gravity", 1.27),
                ("pump-capacity", 20.0),
            ],
        );
        let without = engine.compute(&req).unwrap();
        assert_eq!(extra(&without, "lsi-after"), None);
        req.values.insert("calcium-hardness", 120.0);
        let with = engine.compute(&req).unwrap();
        let state = WaterState::new(&WaterInput::new(7.0, 18.0, 90.0).with_calcium_as_caco3(120.0))
            .unwrap();
        let caustic = water::Catalog::embedded().unwrap().find("caustic").unwrap();
        let d = water::dose_for_ph(&state, caustic, 8.2, Precipitation::None).unwrap();
        let (after, _) = dose_effect(&state, caustic, d.dose_mg_l, Precipitation::None).unwrap();
        let direct = water::stability(&after).unwrap();
        assert_eq!(extra(&with, "lsi-after"), direct.langelier_index);
        assert_eq!(extra(&with, "ccpp-after"), Some(direct.ccpp_mg_l_as_caco3));
        assert_eq!(with.dose_mg_per_l, Some(d.dose_mg_l));
    }

    /// A gas or dry product's case: the calculator's request, the dose its own engine
    /// calculator gives, and the feeder the card must be set for.
    struct ByMass {
        request: CalcRequest,
        dose: f64,
        feeder: PumpKind,
    }

    /// The card's numbers are the engine's `feed()` for that dose with that feeder: feed mass,
    /// product mass to set, the feeder's % of full scale; no product volume; the product's
    /// hazard cautions are on the card.
    fn check(engine: &DosingEngine, case: ByMass) {
        let product = case.request.product.clone().unwrap();
        let out = engine
            .compute(&case.request)
            .unwrap_or_else(|e| panic!("{product}: {e:?}"));
        let purity = case
            .request
            .get("purity")
            .or(case.request.get("lime-purity"));
        let direct = feed(
            &engine.catalog,
            &FeedInput {
                flow: Flow::new(
                    Measured::exact(case.request.get("flow").unwrap()),
                    FlowUnit::M3d,
                ),
                dose: Measured::exact(case.dose),
                product: product.clone(),
                strength: Strength::new(
                    Measured::exact(purity.unwrap()),
                    StrengthBasis::Purity,
                    None,
                ),
                pump: Some(case.feeder),
                usable_range: UsableRange::default(),
                max_use_level_mg_l: None,
            },
        )
        .unwrap_or_else(|e| panic!("{product} direct: {e:?}"));
        let close = |a: Option<f64>, b: f64| a.is_some_and(|a| (a - b).abs() <= 1e-9 * b.abs());
        assert!(
            close(out.dose_mg_per_l, case.dose),
            "{product} dose {out:?}"
        );
        assert!(
            close(out.feed_kg_per_day, direct.active_kg_per_day),
            "{product} feed"
        );
        assert!(
            close(out.product_kg_per_day, direct.product_kg_per_day),
            "{product} rate to set"
        );
        let setting = direct.pump.as_ref().expect("a feeder setting").percent;
        assert!(
            close(out.pump_setting_percent, setting),
            "{product} setting"
        );
        assert_eq!(
            out.product_l_per_hour, None,
            "{product}: a volume for a gas/dry feed"
        );
        for hazard in &engine.catalog.product(&product).unwrap().hazards {
            assert!(
                out.cautions.iter().any(|c| &c.code == hazard),
                "{product}: {hazard} not on the card"
            );
        }
        assert!(
            out.trace
                .contains(&TraceLine::Heading("pump-setting".into())),
            "{product}: the feeder setting's work is shown"
        );
    }

    const FLOW: f64 = 9084.99;

    fn gas(kg_per_day: f64) -> PumpKind {
        PumpKind::GasFeeder {
            capacity: kg_per_day,
            unit: MassRateUnit::KgPerDay,
        }
    }

    fn dry(kg_per_day: f64) -> PumpKind {
        PumpKind::DryFeeder {
            capacity: kg_per_day,
            unit: MassRateUnit::KgPerDay,
        }
    }

    fn ph_dose(water_id: &str, raw: f64, target: f64, alkalinity: f64) -> f64 {
        let state = WaterState::new(&WaterInput::new(raw, 15.0, alkalinity)).unwrap();
        let chemical = water::Catalog::embedded().unwrap().find(water_id).unwrap();
        water::dose_for_ph(&state, chemical, target, Precipitation::None)
            .unwrap()
            .dose_mg_l
    }

    #[test]
    fn gas_and_dry_feeds_are_the_engines_feeder_settings() {
        let engine = DosingEngine::new().unwrap();
        let chlorination = |mode, product, values: &[(&'static str, f64)]| {
            request(CalcKind::Chlorination, mode, product, values)
        };
        let ph = |product, capacity: (&'static str, f64), raw, target| {
            request(
                CalcKind::PhControl,
                CalcMode::Standard,
                product,
                &[
                    ("flow", FLOW),
                    ("ph-raw", raw),
                    ("ph-target", target),
                    ("alkalinity", 60.0),
                    ("temperature", 15.0),
                    ("purity", 98.0),
                    capacity,
                ],
            )
        };
        let so2_ratio = dechlorination(&engine.catalog, Measured::exact(1.0), "sulfur-dioxide")
            .unwrap()
            .agent_mg_l;
        let meta_ratio = dechlorination(
            &engine.catalog,
            Measured::exact(1.0),
            "sodium-metabisulfite",
        )
        .unwrap()
        .agent_mg_l;
        let ammonia_n = chloramination(&engine.catalog, Measured::exact(4.0), Measured::exact(4.5))
            .unwrap()
            .ammonia_n_mg_l;
        let cases = [
            // Chlorine gas through a rotameter: dose = demand + residual.
            ByMass {
                request: chlorination(
                    CalcMode::FreeChlorine,
                    "chlorine-gas",
                    &[
                        ("flow", FLOW),
                        ("chlorine-demand", 1.5),
                        ("residual-target", 1.0),
                        ("purity", 100.0),
                        ("gas-feeder-capacity", 45.359237),
                    ],
                ),
                dose: 2.5,
                feeder: gas(45.359237),
            },
            // A liquid's SG and pump volume left over in the request change nothing.
            ByMass {
                request: chlorination(
                    CalcMode::FreeChlorine,
                    "chlorine-gas",
                    &[
                        ("flow", FLOW),
                        ("chlorine-demand", 0.8),
                        ("residual-target", 0.6),
                        ("purity", 99.5),
                        ("gas-feeder-capacity", 90.7),
                        ("specific-gravity", 1.2),
                        ("pump-capacity", 15.0),
                        ("strength", 12.5),
                    ],
                ),
                dose: 1.4,
                feeder: gas(90.7),
            },
            ByMass {
                request: chlorination(
                    CalcMode::Dechlorination,
                    "sulfur-dioxide",
                    &[
                        ("flow", FLOW),
                        ("residual-in", 2.0),
                        ("purity", 100.0),
                        ("gas-feeder-capacity", 40.0),
                    ],
                ),
                dose: 2.0 * so2_ratio,
                feeder: gas(40.0),
            },
            ByMass {
                request: chlorination(
                    CalcMode::Dechlorination,
                    "sodium-metabisulfite",
                    &[
                        ("flow", FLOW),
                        ("residual-in", 2.0),
                        ("purity", 97.0),
                        ("dry-feeder-capacity", 60.0),
                    ],
                ),
                dose: 2.0 * meta_ratio,
                feeder: dry(60.0),
            },
            ByMass {
                request: chlorination(
                    CalcMode::Chloramine,
                    "ammonium-sulfate",
                    &[
                        ("flow", FLOW),
                        ("chlorine-dose", 4.0),
                        ("cl2-n-ratio", 4.5),
                        ("purity", 99.0),
                        ("dry-feeder-capacity", 50.0),
                    ],
                ),
                dose: ammonia_n,
                feeder: dry(50.0),
            },
            ByMass {
                request: ph("carbon-dioxide", ("gas-feeder-capacity", 200.0), 8.8, 7.8),
                dose: ph_dose("carbon-dioxide", 8.8, 7.8, 60.0),
                feeder: gas(200.0),
            },
            ByMass {
                request: ph("hydrated-lime", ("dry-feeder-capacity", 181.4), 6.6, 7.6),
                dose: ph_dose("lime", 6.6, 7.6, 60.0),
                feeder: dry(181.4),
            },
            ByMass {
                request: ph("soda-ash", ("dry-feeder-capacity", 300.0), 6.6, 7.6),
                dose: ph_dose("soda-ash", 6.6, 7.6, 60.0),
                feeder: dry(300.0),
            },
        ];
        for case in cases {
            check(&engine, case);
        }
    }

    #[test]
    fn with_the_water_given_chlorine_shows_the_ph_and_alkalinity_it_leaves() {
        let engine = DosingEngine::new().unwrap();
        let water = [("ph", 7.2), ("alkalinity", 60.0), ("temperature", 12.0)];
        let effect = |product: &str, form: &[(&'static str, f64)]| {
            let mut values = vec![
                ("flow", FLOW),
                ("chlorine-demand", 1.5),
                ("residual-target", 1.0),
            ];
            values.extend_from_slice(form);
            values.extend_from_slice(&water);
            let out = engine
                .compute(&request(
                    CalcKind::Chlorination,
                    CalcMode::FreeChlorine,
                    product,
                    &values,
                ))
                .unwrap();
            let direct = chlorine_dose_in_water(
                &engine.catalog,
                &ChlorineInput {
                    demand: Measured::exact(1.5),
                    residual: Measured::exact(1.0),
                    ammonia_n: None,
                    residual_limit_mg_l: None,
                },
                product,
                &WaterState::new(&WaterInput::new(7.2, 12.0, 60.0)).unwrap(),
                PhRange::default(),
            )
            .unwrap()
            .water
            .unwrap();
            assert_eq!(extra(&out, "ph-after"), Some(direct.ph_after), "{product}");
            assert_eq!(
                extra(&out, "alkalinity-after"),
                Some(direct.alkalinity_after_mg_l_as_caco3),
                "{product}"
            );
            let codes: Vec<_> = out.cautions.iter().map(|c| c.code.clone()).collect();
            assert!(
                codes.contains(&"ph-effect-chlorine-as-fed".to_string()),
                "{codes:?}"
            );
            assert!(
                !codes.contains(&"give-water-for-ph-effect".to_string()),
                "{codes:?}"
            );
            direct
        };
        let gas = effect(
            "chlorine-gas",
            &[("purity", 100.0), ("gas-feeder-capacity", 45.359237)],
        );
        let hypo = effect(
            "sodium-hypochlorite",
            &[
                ("strength", 12.5),
                ("specific-gravity", 1.2),
                ("pump-capacity", 15.0),
            ],
        );
        // Chlorine gas hydrolyses to an acid; hypochlorite brings its base with it.
        assert!(
            gas.ph_after < 7.2 && gas.alkalinity_after_mg_l_as_caco3 < 60.0,
            "{gas:?}"
        );
        assert!(hypo.ph_after > 7.2, "{hypo:?}");
        // Without the whole water, no pH numbers: the card says what to give instead.
        let partial = engine
            .compute(&request(
                CalcKind::Chlorination,
                CalcMode::FreeChlorine,
                "chlorine-gas",
                &[
                    ("flow", FLOW),
                    ("chlorine-demand", 1.5),
                    ("residual-target", 1.0),
                    ("purity", 100.0),
                    ("gas-feeder-capacity", 45.359237),
                    ("ph", 7.2),
                ],
            ))
            .unwrap();
        assert_eq!(extra(&partial, "ph-after"), None);
    }

    #[test]
    fn chlorine_gas_is_offered_beside_hypochlorite_with_its_cautions() {
        let engine = DosingEngine::new().unwrap();
        let offered = engine.products(CalcKind::Chlorination, CalcMode::FreeChlorine);
        let ids: Vec<_> = offered.iter().map(|p| (p.id.as_str(), p.form)).collect();
        assert_eq!(
            ids,
            [
                ("sodium-hypochlorite", FeedForm::Liquid),
                ("chlorine-gas", FeedForm::Gas)
            ],
            "the liquid stays first, the gas beside it"
        );
        let req = request(
            CalcKind::Chlorination,
            CalcMode::FreeChlorine,
            "chlorine-gas",
            &[
                ("flow", FLOW),
                ("chlorine-demand", 1.5),
                ("residual-target", 1.0),
                ("purity", 100.0),
                ("gas-feeder-capacity", 45.359237),
            ],
        );
        let out = engine.compute(&req).unwrap();
        let codes: Vec<_> = out.cautions.iter().map(|c| c.code.as_str()).collect();
        // The gas's handling cautions, and — as for hypochlorite — the pointer to the pH and
        // alkalinity effect, which the engine models for the gas as well.
        for code in [
            "hazard-toxic-gas",
            "ppe-scba-gas",
            "give-water-for-ph-effect",
        ] {
            assert!(codes.contains(&code), "{code} missing from {codes:?}");
        }
        // A feeder over its scale is the engine's danger, on the card.
        let mut small = req.clone();
        small.values.insert("gas-feeder-capacity", 5.0);
        let out = engine.compute(&small).unwrap();
        assert!(out.pump_setting_percent.unwrap() > 100.0);
        assert!(out.cautions.iter().any(|c| c.code == "pump-over-capacity"));
        // No feeder scale typed: the engine is not asked with a made-up one.
        let mut none = req.clone();
        none.values.remove("gas-feeder-capacity");
        assert!(matches!(
            engine.compute(&none),
            Err(SeamError::Engine(e)) if e.kind() == ErrorKind::InvalidInput
        ));
        // Every product a calculator offers is one the engine can feed with its form's feeder.
        for kind in CalcKind::ALL {
            for &mode in kind.modes() {
                for p in engine.products(kind, mode) {
                    let product = engine.catalog.product(&p.id).unwrap();
                    let expected = match product.form {
                        Form::Solution => FeedForm::Liquid,
                        Form::Gas => FeedForm::Gas,
                        Form::Dry => FeedForm::Dry,
                    };
                    assert_eq!(p.form, expected, "{}", p.id);
                }
            }
        }
    }

    #[test]
    fn softening_gives_the_lime_feeders_setting_when_its_scale_is_given() {
        let engine = DosingEngine::new().unwrap();
        let mut values = vec![
            ("flow", 4000.0),
            ("total-hardness", 260.0),
            ("calcium-hardness", 190.0),
            ("alkalinity", 180.0),
            ("ph", 7.6),
            ("temperature", 14.0),
            ("excess-lime", 35.0),
            ("lime-purity", 94.0),
            ("soda-ash-purity", 98.0),
        ];
        let without = engine
            .compute(&request(
                CalcKind::Softening,
                CalcMode::Standard,
                "hydrated-lime",
                &values,
            ))
            .unwrap();
        assert_eq!(without.pump_setting_percent, None);
        // 400 lb/d, the demo plant's lime feeder, in kg/d.
        let scale = crate::app::units::Unit::LbPerDay.to_si(400.0);
        values.push(("lime-feeder-capacity", scale));
        let req = request(
            CalcKind::Softening,
            CalcMode::Standard,
            "hydrated-lime",
            &values,
        );
        check(
            &engine,
            ByMass {
                dose: without.dose_mg_per_l.unwrap(),
                request: req,
                feeder: dry(scale),
            },
        );
    }
}
