//! The table itself: one entry per calculator, in the order the app lists them.
//!
//! Design choice: the entries are plain data (inputs, results, offers) beside a compute
//! function from [`super::compute`]; reading one entry tells everything a front end will ask
//! and show for that calculator.

use super::compute;
use super::compute::ALKALIS;
use super::{
    Calculator, Input, ModeChoice, Offer, ProductInputs, ResultSpec, Scope, TextInput, headline,
    secondary,
};
use super::{DOSE_AS, PRODUCT, STRENGTH_BASIS};
use super::{FeedForm, Instrument, Quantity as Q};

const CACO3: &str = "CaCO3";
const CL2: &str = "Cl2";
const DRY_SOLIDS: &str = "dry solids";

const fn water(name: &'static str, quantity: Q) -> Input {
    Input {
        name,
        quantity,
        basis: None,
        optional: false,
        scope: Scope::Water,
        limit: None,
        // A reading of the water is measured, with the instrument usual for its quantity.
        instrument: Instrument::for_water(quantity),
        only_for: &[],
        short_flag: None,
        unit_flag: None,
        former_name: None,
    }
}

/// `input`, which was called `former` before (see [`Input::former_name`]).
const fn formerly(input: Input, former: &'static str) -> Input {
    Input {
        former_name: Some(former),
        ..input
    }
}

/// `input` also written `--<flag>` (the trade's short name).
const fn short_flag(input: Input, flag: &'static str) -> Input {
    Input {
        short_flag: Some(flag),
        ..input
    }
}

/// `input`'s unit given by `--<flag>` (as the trade writes it) besides `--<name>-unit`.
const fn unit_flag(input: Input, flag: &'static str) -> Input {
    Input {
        unit_flag: Some(flag),
        ..input
    }
}

/// A number of this calculation: a target or a choice, exact unless read with an instrument.
const fn own(name: &'static str, quantity: Q) -> Input {
    Input {
        scope: Scope::Calculation,
        instrument: None,
        ..water(name, quantity)
    }
}

/// A number of the product or its pump: label data, exact unless read with an instrument.
const fn product(name: &'static str, quantity: Q) -> Input {
    Input {
        scope: Scope::Product,
        instrument: None,
        ..water(name, quantity)
    }
}

/// An input read with `instrument`, whose precision gives the results their range.
const fn read_with(input: Input, instrument: Instrument) -> Input {
    Input {
        instrument: Some(instrument),
        ..input
    }
}

const fn as_caco3(input: Input) -> Input {
    Input {
        basis: Some("CaCO3"),
        ..input
    }
}

const fn based(input: Input, basis: &'static str) -> Input {
    Input {
        basis: Some(basis),
        ..input
    }
}

const fn optional(input: Input) -> Input {
    Input {
        optional: true,
        ..input
    }
}

/// An input only `results` need: without it they are absent and the others still computed.
const fn only_for(input: Input, results: &'static [&'static str]) -> Input {
    Input {
        only_for: results,
        ..input
    }
}

const fn limited(input: Input, parameter: &'static str) -> Input {
    Input {
        limit: Some(parameter),
        ..input
    }
}

const FLOW: Input = water("flow", Q::Flow);

/// A liquid product's specific gravity, `--sg` for short.
const SPECIFIC_GRAVITY: Input = short_flag(product("specific-gravity", Q::SpecificGravity), "sg");

/// A metering pump's output at full scale, its unit `--pump-unit` for short.
const PUMP_CAPACITY: Input = unit_flag(product("pump-capacity", Q::VolumePerHour), "pump-unit");

/// The results of a dose fed through a pump or feeder, in card order: the dose, the active
/// chemical per day, the product as delivered (volume for a liquid, mass for a gas or dry
/// chemical) and the setting of the pump or feeder.
const FEED_RESULTS: [ResultSpec; 6] = [
    headline("dose", Q::Concentration).on(DOSE_AS),
    headline("feed_mass_rate", Q::MassPerDay).on(DOSE_AS),
    headline("product_volume_rate", Q::VolumePerHour).on(PRODUCT),
    headline("product_mass_rate", Q::MassPerDay).on(PRODUCT),
    headline("pump_setting", Q::Percent),
    headline("feeder_setting", Q::Percent),
];

/// pH-adjustment chemicals, liquids first, then the gas and the dry chemicals.
pub(super) const PH_PRODUCTS: [&str; 7] = [
    "sodium-hydroxide",
    "sulfuric-acid",
    "hydrochloric-acid",
    // A slurry, fed by a pump like the liquids.
    "magnesium-hydroxide",
    "carbon-dioxide",
    "hydrated-lime",
    "soda-ash",
];

/// Dechlorinating agents by the compound their dose is expressed as.
const DECHLOR_AGENTS: [&str; 6] = ["SO2", "NaHSO3", "Na2S2O5", "Na2SO3", "Na2S2O3", "C6H8O6"];

/// Liquid coagulants a metering pump feeds.
const COAGULANTS: [&str; 4] = ["alum-liquid", "ferric-chloride", "ferric-sulfate", "pacl"];

/// The coagulants the coagulation and phosphorus-removal calculators offer: the metal salts
/// and sodium aluminate, the alkaline coagulant that adds alkalinity instead of consuming it.
const COAGULATION_PRODUCTS: [&str; 5] = [
    "alum-liquid",
    "ferric-chloride",
    "ferric-sulfate",
    "pacl",
    "sodium-aluminate",
];

/// Hypochlorites for disinfecting a main, a tank or a well.
const HYPOCHLORITES: [&str; 2] = ["sodium-hypochlorite", "calcium-hypochlorite"];

/// Products a jar test's stock is made from: the coagulants and the alkalis.
const JAR_PRODUCTS: [&str; 7] = [
    "alum-liquid",
    "ferric-chloride",
    "ferric-sulfate",
    "pacl",
    "sodium-hydroxide",
    "hydrated-lime",
    "soda-ash",
];

/// Where a jar test's dose goes, by the stock's product: the plant calculator and its input
/// that receive it, both on the product's dose compound (a coagulant's jar dose is the
/// coagulation calculator's `jar-dose`; an alkali's is a dose to feed).
pub(super) const JAR_SENDS_TO: [(&str, &str, &str); 7] = [
    ("alum-liquid", "coagulation", "jar-dose"),
    ("ferric-chloride", "coagulation", "jar-dose"),
    ("ferric-sulfate", "coagulation", "jar-dose"),
    ("pacl", "coagulation", "jar-dose"),
    ("sodium-hydroxide", "feed", "dose"),
    ("hydrated-lime", "feed", "dose"),
    ("soda-ash", "feed", "dose"),
];

/// Inputs given as text: the compound a jar test's stock is made of (its formula; without
/// it, the product's dose compound).
pub static TEXT_INPUTS: [TextInput; 1] = [TextInput {
    calculator: "jar-test",
    name: "stock-compound",
    kind: "formula",
}];

/// Lime products for softening; soda ash is the other softening chemical.
pub(super) const LIMES: [&str; 2] = ["hydrated-lime", "quicklime"];

/// The product inputs `kind` asks for with a product fed as `form`, its strength on `basis`.
pub(super) fn product_inputs(
    kind: ProductInputs,
    form: FeedForm,
    basis: Option<&'static str>,
) -> Vec<Input> {
    // A gas's or dry chemical's numbers have other names than a liquid's, so that a liquid's
    // strength, SG or pump volume can never feed a gas or dry calculation after a switch.
    let strength = match form {
        FeedForm::Liquid => vec![product("strength", Q::Percent), SPECIFIC_GRAVITY],
        // A dry chemical's or gas's strength is its purity: `--strength` gives it too.
        FeedForm::Gas | FeedForm::Dry => {
            vec![short_flag(product("purity", Q::Percent), "strength")]
        }
    };
    let strength: Vec<Input> = strength
        .into_iter()
        .map(|i| match (i.quantity, basis) {
            (Q::Percent, Some(b)) => based(i, b),
            (Q::Percent, None) if i.name == "purity" => based(i, "purity"),
            _ => i,
        })
        .collect();
    // The full scale gives the setting alone: the dose, the feed mass and the product rate
    // are shown without it.
    let scale = match form {
        FeedForm::Liquid => only_for(PUMP_CAPACITY, &["pump_setting"]),
        FeedForm::Gas => only_for(
            product("gas-feeder-capacity", Q::MassPerDay),
            &["feeder_setting"],
        ),
        FeedForm::Dry => only_for(
            product("dry-feeder-capacity", Q::MassPerDay),
            &["feeder_setting"],
        ),
    };
    // A field test measures what the pump or feeder delivers: a volume drawn down for a
    // liquid, a mass weighed for a chemical fed by mass (a dry feeder's catch, a gas
    // cylinder's scale loss).
    let test = match form {
        FeedForm::Liquid => [
            based(
                read_with(
                    product("drawdown-volume", Q::Millilitres),
                    Instrument::GraduatedColumn,
                ),
                PRODUCT,
            ),
            read_with(own("drawdown-time", Q::Seconds), Instrument::Stopwatch),
            product("pump-setting", Q::Percent),
        ],
        FeedForm::Gas | FeedForm::Dry => [
            based(
                read_with(product("catch-mass", Q::Grams), Instrument::Scale),
                PRODUCT,
            ),
            read_with(own("catch-time", Q::Seconds), Instrument::Stopwatch),
            product("feeder-setting", Q::Percent),
        ],
    };
    match kind {
        ProductInputs::None => Vec::new(),
        ProductInputs::Strength => strength,
        ProductInputs::FieldTest => {
            let mut v = test.to_vec();
            v.extend(strength);
            v
        }
        ProductInputs::Feed => {
            let mut v = strength;
            v.push(scale);
            v
        }
    }
}

// ---- The plant's other feeds (part A): fluoride, phosphate, permanganate, chlorine dioxide.

/// Fluoride products, liquid first; each is dosed as F through its formula.
const FLUORIDE_PRODUCTS: [&str; 4] = [
    "fluorosilicic-acid",
    "sodium-fluorosilicate",
    "sodium-fluoride",
    // Saturated NaF made on site: its strength is fixed by solubility.
    "sodium-fluoride-saturator",
];

/// Phosphate corrosion inhibitors, each dosed as PO4.
const PHOSPHATE_PRODUCTS: [&str; 4] = [
    "phosphoric-acid",
    "zinc-orthophosphate",
    "blended-phosphate",
    "sodium-orthophosphate",
];

/// Permanganate as delivered (dry) or made down on site (a solution).
const PERMANGANATE_PRODUCTS: [&str; 2] =
    ["potassium-permanganate", "potassium-permanganate-solution"];

/// Sodium chlorite for a chlorine dioxide generator, as a solution or dry.
const CHLORITE_PRODUCTS: [&str; 2] = ["sodium-chlorite", "sodium-chlorite-dry"];

/// Basis of a phosphate residual: the calculator's mode (as PO4, as P or as P2O5).
const RESIDUAL_BASIS: &str = "residual-basis";

/// Modes the trade chooses by a named choice of their own (`--residual-basis p`, `--route
/// acid-chlorite`), each beside its calculator's entry below: the choice's values and the mode
/// each stands for. A calculator not listed is given its mode by `--mode`.
pub static MODE_CHOICES: [ModeChoice; 3] = [
    ModeChoice {
        calculator: "corrosion-inhibitor",
        name: RESIDUAL_BASIS,
        values: &[
            ("po4", "residual-as-po4"),
            ("p", "residual-as-p"),
            ("p2o5", "residual-as-p2o5"),
        ],
    },
    ModeChoice {
        calculator: "chlorine-dioxide",
        name: "route",
        values: &[
            ("chlorine-chlorite", "chlorine-chlorite"),
            ("acid-chlorite", "acid-chlorite"),
        ],
    },
    // A tank calculator's modes are its shapes.
    ModeChoice {
        calculator: "tank-volume",
        name: "shape",
        values: &[
            ("vertical-cylinder", "vertical-cylinder"),
            ("horizontal-cylinder", "horizontal-cylinder"),
            ("rectangular", "rectangular"),
            ("cone-bottom", "cone-bottom"),
            ("strapping", "strapping"),
        ],
    },
];

pub static TABLE: [Calculator; 22] = [
    Calculator {
        id: "ph-adjustment",
        group: "ph-adjustment",
        modes: &[],
        inputs: &[
            FLOW,
            formerly(water("ph", Q::Ph), "ph-raw"),
            formerly(limited(own("target-ph", Q::Ph), "ph"), "ph-target"),
            as_caco3(water("alkalinity", Q::AsCaCO3)),
            water("temperature", Q::Temperature),
            // With calcium, the Langelier index and CCPP the water leaves with.
            optional(as_caco3(water("calcium-hardness", Q::AsCaCO3))),
        ],
        product_inputs: ProductInputs::Feed,
        offer: Offer::Listed(&PH_PRODUCTS),
        results: &[
            FEED_RESULTS[0],
            FEED_RESULTS[1],
            FEED_RESULTS[2],
            FEED_RESULTS[3],
            FEED_RESULTS[4],
            FEED_RESULTS[5],
            secondary("ph_after", Q::Ph),
            secondary("alkalinity_after", Q::AsCaCO3).on(CACO3),
            secondary("lsi_after", Q::Index),
            secondary("ccpp_after", Q::AsCaCO3).on(CACO3),
        ],
        in_app: true,
        compute: compute::ph_adjustment,
        curve: Some(compute::ph_adjustment_curve),
    },
    Calculator {
        id: "free-chlorine",
        group: "chlorination",
        modes: &[],
        inputs: &[
            FLOW,
            based(
                read_with(
                    own("chlorine-demand", Q::Concentration),
                    Instrument::Colorimeter,
                ),
                CL2,
            ),
            formerly(
                limited(
                    based(own("target-residual", Q::Concentration), CL2),
                    "chlorine",
                ),
                "residual-target",
            ),
            // Ammonia in the water: chlorine must pass breakpoint before a free residual forms.
            optional(based(water("ammonia-n", Q::Concentration), "N")),
            // With all three, the pH and alkalinity the chlorine leaves.
            optional(water("ph", Q::Ph)),
            optional(as_caco3(water("alkalinity", Q::AsCaCO3))),
            optional(water("temperature", Q::Temperature)),
        ],
        product_inputs: ProductInputs::Feed,
        offer: Offer::Feedable(Some(&["Cl2"])),
        results: &[
            FEED_RESULTS[0],
            FEED_RESULTS[1],
            FEED_RESULTS[2],
            FEED_RESULTS[3],
            FEED_RESULTS[4],
            FEED_RESULTS[5],
            secondary("breakpoint_dose", Q::Concentration).on(CL2),
            // After breakpoint (end state), when the water is given.
            secondary("ph_after", Q::Ph),
            secondary("alkalinity_after", Q::AsCaCO3).on(CACO3),
            secondary("breakpoint_alkalinity_consumed", Q::AsCaCO3).on(CACO3),
        ],
        in_app: true,
        compute: compute::free_chlorine,
        curve: None,
    },
    Calculator {
        id: "chloramine",
        group: "chlorination",
        // Where the ammonia is fed: with the chlorine (the natural ammonia counts toward the
        // ratio) or downstream after a free-chlorine contact (it is taken through breakpoint
        // first). See `dosing::chlorine::chloramination_with_natural_ammonia`.
        modes: &["ammonia-with-chlorine", "ammonia-after-chlorine"],
        inputs: &[
            FLOW,
            limited(
                based(own("chlorine-dose", Q::Concentration), "Cl2"),
                "chloramines",
            ),
            own("cl2-n-ratio", Q::Ratio),
            // Ammonia already in the water.
            optional(based(water("ammonia-n", Q::Concentration), "N")),
        ],
        product_inputs: ProductInputs::Feed,
        offer: Offer::Feedable(Some(&["N"])),
        results: &[
            FEED_RESULTS[0],
            FEED_RESULTS[1],
            FEED_RESULTS[2],
            FEED_RESULTS[3],
            FEED_RESULTS[4],
            FEED_RESULTS[5],
            secondary("free_chlorine_at_ammonia_point", Q::Concentration).on(CL2),
            secondary("free_ammonia_left", Q::Concentration).on("N"),
        ],
        in_app: true,
        compute: compute::chloramine,
        curve: None,
    },
    Calculator {
        id: "dechlorination",
        group: "chlorination",
        modes: &[],
        inputs: &[
            FLOW,
            based(
                read_with(
                    own("residual-in", Q::Concentration),
                    Instrument::Colorimeter,
                ),
                "Cl2",
            ),
        ],
        product_inputs: ProductInputs::Feed,
        offer: Offer::Feedable(Some(&DECHLOR_AGENTS)),
        results: &FEED_RESULTS,
        in_app: true,
        compute: compute::dechlorination,
        curve: None,
    },
    Calculator {
        id: "coagulation",
        group: "coagulation",
        // The alkali that keeps the residual alkalinity.
        modes: &["alkali-caustic", "alkali-lime", "alkali-soda-ash"],
        inputs: &[
            FLOW,
            based(own("jar-dose", Q::Concentration), DOSE_AS),
            as_caco3(water("alkalinity", Q::AsCaCO3)),
            as_caco3(own("alkalinity-setpoint", Q::AsCaCO3)),
            water("ph", Q::Ph),
            water("temperature", Q::Temperature),
        ],
        product_inputs: ProductInputs::Feed,
        offer: Offer::Listed(&COAGULATION_PRODUCTS),
        results: &[
            FEED_RESULTS[0],
            FEED_RESULTS[1],
            FEED_RESULTS[2],
            FEED_RESULTS[3],
            FEED_RESULTS[4],
            secondary("alkalinity_consumed", Q::AsCaCO3).on(CACO3),
            // Sodium aluminate's, in place of alkalinity_consumed.
            secondary("alkalinity_added", Q::AsCaCO3).on(CACO3),
            secondary("alkalinity_remaining", Q::AsCaCO3).on(CACO3),
            secondary("ph_after_coagulant", Q::Ph),
            // As the mode's alkali (NaOH, Ca(OH)2, Na2CO3): the outcome names which.
            secondary("supplemental_alkali", Q::Concentration).on("alkali"),
            secondary("ph_after_alkali", Q::Ph),
            secondary("coagulant_solids", Q::MassPerDay).on(DRY_SOLIDS),
        ],
        in_app: true,
        compute: compute::coagulation,
        curve: Some(compute::coagulation_curve),
    },
    Calculator {
        id: "softening",
        group: "softening",
        modes: &[],
        // Lime and soda ash are dry-fed: purities instead of strength, SG and a pump.
        inputs: &[
            FLOW,
            as_caco3(water("total-hardness", Q::AsCaCO3)),
            as_caco3(water("calcium-hardness", Q::AsCaCO3)),
            as_caco3(water("alkalinity", Q::AsCaCO3)),
            water("ph", Q::Ph),
            water("temperature", Q::Temperature),
            based(own("excess-lime", Q::Concentration), "CaO"),
            based(product("lime-purity", Q::Percent), "purity"),
            // The lime feeder's full scale gives its setting; without it, kg/d only.
            optional(product("lime-feeder-capacity", Q::MassPerDay)),
            // Soda ash is not the product chosen (a lime is): its purity is this calculation's.
            based(own("soda-ash-purity", Q::Percent), "purity"),
        ],
        product_inputs: ProductInputs::None,
        offer: Offer::Listed(&LIMES),
        results: &[
            FEED_RESULTS[0],
            FEED_RESULTS[1],
            FEED_RESULTS[3],
            FEED_RESULTS[5],
            secondary("soda_ash_dose", Q::Concentration).on("Na2CO3"),
            secondary("soda_ash_product_mass_rate", Q::MassPerDay).on(PRODUCT),
            secondary("free_co2", Q::Concentration).on("CO2"),
            secondary("magnesium_removed", Q::Concentration).on("Mg"),
            secondary("non_carbonate_hardness", Q::AsCaCO3).on(CACO3),
            secondary("ph_softened", Q::Ph),
            secondary("hardness_softened", Q::AsCaCO3).on(CACO3),
        ],
        in_app: true,
        compute: compute::softening,
        curve: None,
    },
    Calculator {
        id: "pump-check",
        group: "pump-check",
        modes: &[],
        // A field test needs no pump capacity: what was measured, the setting during the test
        // and the product's strength (a drawdown for a liquid, a weighed catch for a chemical
        // fed by mass).
        inputs: &[FLOW, based(own("dose", Q::Concentration), DOSE_AS)],
        product_inputs: ProductInputs::FieldTest,
        offer: Offer::Feedable(None),
        results: &[
            headline("actual_dose", Q::Concentration).on(DOSE_AS),
            headline("deviation", Q::Percent),
            FEED_RESULTS[1],
            FEED_RESULTS[2],
            FEED_RESULTS[3],
            headline("suggested_pump_setting", Q::Percent),
            headline("suggested_feeder_setting", Q::Percent),
        ],
        in_app: true,
        compute: compute::pump_check,
        curve: None,
    },
    Calculator {
        id: "feed",
        group: "feed",
        modes: &[],
        inputs: &[FLOW, based(own("dose", Q::Concentration), DOSE_AS)],
        product_inputs: ProductInputs::Feed,
        offer: Offer::Feedable(None),
        results: &FEED_RESULTS,
        in_app: true,
        compute: compute::feed,
        curve: None,
    },
    // Scripting tools without a card of their own in the app.
    Calculator {
        id: "ct",
        group: "ct",
        modes: &[],
        inputs: &[
            based(
                read_with(own("residual", Q::Concentration), Instrument::Colorimeter),
                "Cl2",
            ),
            water("ph", Q::Ph),
            water("temperature", Q::Temperature),
            // T10 from a tracer study; without it, the basin's volume and baffling at a flow.
            optional(own("t10", Q::Minutes)),
            optional(FLOW),
            optional(own("basin-volume", Q::Volume)),
            optional(own("baffling-factor", Q::Ratio)),
        ],
        product_inputs: ProductInputs::None,
        offer: Offer::None,
        results: &[
            headline("ct", Q::ConcentrationTime).on(CL2),
            headline("ct_required_3log", Q::ConcentrationTime).on(CL2),
            headline("inactivation_ratio", Q::Ratio),
            headline("giardia_log_inactivation", Q::Index),
            secondary("t10", Q::Minutes),
            secondary("ct_required_1log", Q::ConcentrationTime).on(CL2),
        ],
        in_app: false,
        compute: compute::ct,
        curve: None,
    },
    Calculator {
        id: "dilution",
        group: "dilution",
        modes: &[],
        inputs: &[
            based(own("target-strength", Q::Percent), STRENGTH_BASIS),
            // The engine reads a solution's strength with its SG, the weaker one's too.
            own("target-specific-gravity", Q::SpecificGravity),
            own("final-volume", Q::Volume),
        ],
        product_inputs: ProductInputs::Strength,
        offer: Offer::Liquids,
        results: &[
            headline("concentrate_volume", Q::Volume).on(PRODUCT),
            headline("water_volume", Q::Volume).on("water"),
        ],
        in_app: false,
        compute: compute::dilution,
        curve: None,
    },
    Calculator {
        id: "sludge",
        group: "sludge",
        modes: &[],
        inputs: &[
            FLOW,
            based(own("dose", Q::Concentration), DOSE_AS),
            // Raw-water suspended solids removed (measured, or b × NTU with the plant's own b).
            optional(based(own("suspended-solids", Q::Concentration), DRY_SOLIDS)),
            optional(based(own("additives", Q::Concentration), DRY_SOLIDS)),
        ],
        product_inputs: ProductInputs::None,
        offer: Offer::Listed(&COAGULANTS),
        results: &[
            headline("solids_concentration", Q::Concentration).on(DRY_SOLIDS),
            headline("dry_solids_mass_rate", Q::MassPerDay).on(DRY_SOLIDS),
            // Iron: the published alternative basis (hydrated floc, 2.9 × Fe) beside 1.9 × Fe.
            secondary("alternative_solids_concentration", Q::Concentration).on(DRY_SOLIDS),
            secondary("alternative_dry_solids_mass_rate", Q::MassPerDay).on(DRY_SOLIDS),
        ],
        in_app: false,
        compute: compute::sludge,
        curve: None,
    },
    // ---- The plant's other feeds (part A).
    Calculator {
        id: "fluoridation",
        group: "fluoridation",
        modes: &[],
        inputs: &[
            FLOW,
            // Checked against the fluoride limit and, through `site::related_limits`, the
            // secondary standard and the recommended level.
            limited(
                based(own("target-fluoride", Q::Concentration), "F"),
                "fluoride",
            ),
            based(water("natural-fluoride", Q::Concentration), "F"),
        ],
        product_inputs: ProductInputs::Feed,
        offer: Offer::Listed(&FLUORIDE_PRODUCTS),
        results: &[
            FEED_RESULTS[0],
            FEED_RESULTS[1],
            FEED_RESULTS[2],
            FEED_RESULTS[3],
            FEED_RESULTS[4],
            FEED_RESULTS[5],
            // The dose (as F) under the name scripts rely on.
            secondary("fluoride_added", Q::Concentration).on("F"),
        ],
        in_app: true,
        compute: compute::fluoridation,
        curve: None,
    },
    Calculator {
        id: "corrosion-inhibitor",
        group: "corrosion-inhibitor",
        // What the residuals are expressed as; the dose is always reported as PO4.
        modes: &["residual-as-po4", "residual-as-p", "residual-as-p2o5"],
        inputs: &[
            FLOW,
            based(own("target-residual", Q::Concentration), RESIDUAL_BASIS),
            based(water("present-residual", Q::Concentration), RESIDUAL_BASIS),
            // The share of the product's phosphate that is orthophosphate, from its data
            // sheet; a blend needs it, an orthophosphate is all ortho by its formula.
            optional(based(product("orthophosphate-share", Q::Percent), "PO4")),
            // With all three, the pH and alkalinity the phosphate leaves.
            optional(water("ph", Q::Ph)),
            optional(as_caco3(water("alkalinity", Q::AsCaCO3))),
            optional(water("temperature", Q::Temperature)),
        ],
        product_inputs: ProductInputs::Feed,
        offer: Offer::Listed(&PHOSPHATE_PRODUCTS),
        results: &[
            FEED_RESULTS[0],
            FEED_RESULTS[1],
            FEED_RESULTS[2],
            FEED_RESULTS[3],
            FEED_RESULTS[4],
            FEED_RESULTS[5],
            // The dose (as PO4) under the name scripts rely on.
            secondary("dose_as_po4", Q::Concentration).on("PO4"),
            secondary("orthophosphate_as_po4", Q::Concentration).on("PO4"),
            // When the water is given and the product has a fixed formula.
            secondary("ph_after", Q::Ph),
            secondary("alkalinity_after", Q::AsCaCO3).on(CACO3),
        ],
        in_app: true,
        compute: compute::corrosion_inhibitor,
        curve: None,
    },
    Calculator {
        id: "permanganate",
        group: "permanganate",
        modes: &[],
        inputs: &[
            FLOW,
            based(water("iron", Q::Concentration), "Fe"),
            based(water("manganese", Q::Concentration), "Mn"),
            // Organics and other reductants the operator has measured (mg/L as KMnO4).
            optional(based(own("other-demand", Q::Concentration), "KMnO4")),
        ],
        product_inputs: ProductInputs::Feed,
        offer: Offer::Listed(&PERMANGANATE_PRODUCTS),
        results: &FEED_RESULTS,
        in_app: true,
        compute: compute::permanganate,
        curve: None,
    },
    Calculator {
        id: "chlorine-dioxide",
        group: "chlorine-dioxide",
        // The generator's route: chlorine gas or acid on sodium chlorite.
        modes: &["chlorine-chlorite", "acid-chlorite"],
        inputs: &[
            FLOW,
            limited(
                based(own("clo2-dose", Q::Concentration), "ClO2"),
                "chlorine-dioxide",
            ),
            // Without it, the balanced reaction's 100 %.
            optional(based(
                own("generator-yield", Q::Percent),
                "ClO2 (of theoretical)",
            )),
            // Without it, the typical share of the dose that becomes chlorite.
            optional(based(
                own("chlorite-conversion", Q::Percent),
                "ClO2- (of the ClO2 dose)",
            )),
        ],
        product_inputs: ProductInputs::Feed,
        offer: Offer::Listed(&CHLORITE_PRODUCTS),
        results: &[
            headline("clo2_dose", Q::Concentration).on("ClO2"),
            // The feed of the sodium chlorite (its dose as NaClO2).
            FEED_RESULTS[0],
            FEED_RESULTS[1],
            FEED_RESULTS[2],
            FEED_RESULTS[3],
            FEED_RESULTS[4],
            FEED_RESULTS[5],
            // The chlorite product as delivered, kg/d (the same as product_mass_rate).
            headline("chlorite_feed_rate", Q::MassPerDay).on(PRODUCT),
            // Cl2 for the chlorine route, HCl (as 100 %) for the acid route.
            headline("chlorine_or_acid_feed_rate", Q::MassPerDay).on("Cl2 or HCl"),
            headline("expected_chlorite", Q::Concentration).on("ClO2-"),
        ],
        in_app: true,
        compute: compute::chlorine_dioxide,
        curve: None,
    },
    // Wastewater, distribution and bench calculators.
    Calculator {
        id: "nitrification-alkalinity",
        group: "wastewater",
        modes: &[],
        inputs: &[
            FLOW,
            // Ammonia-N the plant nitrifies and the influent's alkalinity, both measured.
            based(water("ammonia-n", Q::Concentration), "N"),
            as_caco3(water("alkalinity", Q::AsCaCO3)),
            as_caco3(own("residual-alkalinity", Q::AsCaCO3)),
            // Nitrate-N denitrified returns part of the alkalinity (a credit).
            optional(based(
                read_with(
                    own("nitrate-n-denitrified", Q::Concentration),
                    Instrument::Colorimeter,
                ),
                "N",
            )),
        ],
        product_inputs: ProductInputs::Feed,
        offer: Offer::Listed(&ALKALIS),
        results: &[
            headline("alkalinity_needed", Q::AsCaCO3).on(CACO3),
            FEED_RESULTS[0],
            FEED_RESULTS[1],
            FEED_RESULTS[2],
            FEED_RESULTS[3],
            FEED_RESULTS[4],
            FEED_RESULTS[5],
        ],
        in_app: true,
        compute: compute::nitrification_alkalinity,
        curve: None,
    },
    Calculator {
        id: "phosphorus-removal",
        group: "wastewater",
        modes: &[],
        inputs: &[
            FLOW,
            based(water("phosphorus", Q::Concentration), "P"),
            // Moles of Al or Fe per mole of P removed (practice 1.5-2.5, cautioned with source).
            based(own("metal-ratio", Q::Ratio), "mol metal per mol P"),
        ],
        product_inputs: ProductInputs::Feed,
        offer: Offer::Listed(&COAGULATION_PRODUCTS),
        results: &[
            headline("metal_dose", Q::Concentration).on("metal"),
            FEED_RESULTS[0],
            FEED_RESULTS[1],
            FEED_RESULTS[2],
            FEED_RESULTS[3],
            FEED_RESULTS[4],
            secondary("alkalinity_consumed", Q::AsCaCO3).on(CACO3),
            // Sodium aluminate's, in place of alkalinity_consumed.
            secondary("alkalinity_added", Q::AsCaCO3).on(CACO3),
            secondary("sludge_mass_rate", Q::MassPerDay).on(DRY_SOLIDS),
        ],
        in_app: true,
        compute: compute::phosphorus_removal,
        curve: None,
    },
    Calculator {
        id: "main-disinfection",
        group: "main-disinfection",
        // The method (AWWA C651 style, common practice): each has its common target, used
        // when no target is given. What is disinfected follows from the dimensions given: a new
        // pipe (diameter, length), a tank (its volume, or a vertical cylinder's diameter or a
        // rectangle's length and width, with the depth of water) or a well (casing diameter,
        // depth of water); two of them at once are refused.
        modes: &["continuous-feed", "slug", "tablet"],
        inputs: &[
            optional(own("diameter", Q::Diameter)),
            optional(own("length", Q::Length)),
            optional(unit_flag(own("tank-volume", Q::Volume), "volume-unit")),
            optional(unit_flag(own("tank-diameter", Q::Length), "length-unit")),
            optional(unit_flag(own("tank-length", Q::Length), "length-unit")),
            optional(unit_flag(own("tank-width", Q::Length), "length-unit")),
            optional(unit_flag(
                own("casing-diameter", Q::Diameter),
                "diameter-unit",
            )),
            optional(unit_flag(own("water-depth", Q::Length), "length-unit")),
            // Without it, the method's common target (labelled as practice).
            optional(based(own("target-chlorine", Q::Concentration), CL2)),
        ],
        product_inputs: ProductInputs::Strength,
        offer: Offer::Listed(&HYPOCHLORITES),
        results: &[
            headline("water_volume", Q::Volume).on("water"),
            headline("chlorine_mass", Q::Mass).on(CL2),
            headline("product_mass", Q::Mass).on(PRODUCT),
            headline("product_volume", Q::Volume).on(PRODUCT),
        ],
        in_app: true,
        compute: compute::main_disinfection,
        curve: None,
    },
    Calculator {
        id: "polymer",
        group: "polymer",
        // A water or wastewater stream (flow × mg/L) or sludge dewatering (dry solids × kg/t).
        modes: &["stream", "dewatering"],
        inputs: &[
            optional(FLOW),
            optional(based(own("dose", Q::Concentration), "active polymer")),
            optional(based(own("dry-solids-rate", Q::MassPerDay), DRY_SOLIDS)),
            optional(based(own("solids-dose", Q::SolidsDose), "active polymer")),
            based(product("active-percent", Q::Percent), "active"),
            // The neat product's SG, the common `--sg`.
            SPECIFIC_GRAVITY,
            based(own("solution-percent", Q::Percent), "active"),
            optional(PUMP_CAPACITY),
        ],
        product_inputs: ProductInputs::None,
        offer: Offer::None,
        results: &[
            headline("neat_product_rate", Q::VolumePerHour).on(PRODUCT),
            headline("solution_rate", Q::VolumePerHour).on("solution"),
            headline("pump_setting", Q::Percent),
            secondary("feed_mass_rate", Q::MassPerDay).on("active polymer"),
        ],
        in_app: true,
        compute: compute::polymer,
        curve: None,
    },
    Calculator {
        id: "jar-test",
        group: "jar-test",
        modes: &[],
        inputs: &[
            // Mass per volume of the stock, as the product's dose compound (1 % w/v = 10 g/L).
            unit_flag(
                based(own("stock-concentration", Q::StockStrength), DOSE_AS),
                "stock-unit",
            ),
            own("ml-dosed", Q::Millilitres),
            own("jar-volume-ml", Q::Millilitres),
        ],
        product_inputs: ProductInputs::Strength,
        offer: Offer::Listed(&JAR_PRODUCTS),
        results: &[
            headline("jar_dose", Q::Concentration).on(DOSE_AS),
            headline("jar_dose_product", Q::Concentration).on(PRODUCT),
        ],
        in_app: true,
        compute: compute::jar_test,
        curve: None,
    },
    // Two chemicals at one point for two targets at once (pH and a corrosion-control or
    // remineralisation target). Not on the app's calculator screens: its `chemicals` list
    // needs a chooser those generated screens do not have. The app offers it on the Plant
    // path, at a point that lists a pair (`path::two_target_pair`), with that pair and the
    // water arriving there (`app::path_screen`).
    Calculator {
        id: "two-targets",
        group: "two-targets",
        modes: &[],
        inputs: &[
            // Water-engine chemicals, as `ph-after --chemical` names them, in order.
            own("chemicals", Q::Chemicals),
            water("ph", Q::Ph),
            water("temperature", Q::Temperature),
            as_caco3(water("alkalinity", Q::AsCaCO3)),
            optional(as_caco3(water("calcium-hardness", Q::AsCaCO3))),
            limited(own("target-ph", Q::Ph), "ph"),
            // Exactly one of these (the compute function refuses none or two).
            optional(as_caco3(own("target-alkalinity", Q::AsCaCO3))),
            optional(own("target-dic", Q::Millimolar)),
            optional(as_caco3(own("target-calcium", Q::AsCaCO3))),
            optional(own("target-lsi", Q::Index)),
            optional(as_caco3(own("target-ccpp", Q::AsCaCO3))),
        ],
        product_inputs: ProductInputs::None,
        offer: Offer::None,
        results: &[
            // Each as its chemical's compound: the outcome names which.
            headline("first_dose", Q::Concentration).on("compound"),
            headline("second_dose", Q::Concentration).on("compound"),
            secondary("ph_after", Q::Ph),
            secondary("alkalinity_after", Q::AsCaCO3).on(CACO3),
            secondary("langelier_index_after", Q::Index),
        ],
        in_app: false,
        compute: compute::two_targets,
        curve: None,
    },
    // The chemical on hand (stock): a tank's volume at a level and its days of supply.
    Calculator {
        id: "tank-volume",
        group: "stock",
        // The tank's shape, by its dimensions; or the site's tank (its own shape or strapping
        // table). Levels from the lowest point; a cone bottom's height from its tip.
        modes: &[
            "vertical-cylinder",
            "horizontal-cylinder",
            "rectangular",
            "cone-bottom",
            "strapping",
        ],
        inputs: &[
            optional(own("diameter", Q::Length)),
            optional(own("length", Q::Length)),
            optional(own("width", Q::Length)),
            optional(own("height", Q::Length)),
            optional(own("cone-height", Q::Length)),
            own("level", Q::Length),
            optional(own("reorder-level", Q::Length)),
            optional(based(own("use-rate", Q::VolumePerDay), PRODUCT)),
        ],
        product_inputs: ProductInputs::None,
        offer: Offer::None,
        results: &[
            headline("volume", Q::Volume).on(PRODUCT),
            headline("fill_percent", Q::Percent),
            headline("days_of_supply", Q::Days),
            secondary("days_to_reorder", Q::Days),
        ],
        // A command-line and stock-report calculator until the app's Stock view shows it.
        in_app: false,
        compute: compute::tank_volume,
        curve: None,
    },
];
