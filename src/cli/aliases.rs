//! The older dosing subcommands (`feed`, `chlorine`, `neutralize-feed`, `soften`, ...) as thin
//! aliases of `molefeed calc`: each is a row of flag translations onto one calculator of the
//! engine's table, and runs, prints and logs exactly as `calc` does.
//!
//! Design choice: an alias computes nothing. It rewrites its command line into the `calc`
//! command line of its calculator — old flag names to the table's input names, old unit codes
//! to the table's, a delivered product of the site to its catalog id, strength and pump — and
//! hands that to [`super::calc::run`]. A flag the table has no input for is refused with a
//! sentence saying what to give instead, never dropped; an old unit the table does not take is
//! refused rather than converted here (the CLI does no units arithmetic); the table's own input
//! names are accepted under the alias too, so a script can move to `calc` flag by flag. When
//! another calculator's inputs change, only these rows change.

use super::{Args, CliError, CliResult};
use crate::engine::calculators::{self, Calculator, Calculators, FeedForm};
use crate::engine::dosing::feed::PumpKind;
use crate::engine::dosing::site::{DeliveredProduct, SiteProfile};
use crate::engine::dosing::units::{MassRateUnit, VolumeRateUnit, VolumeUnit};

/// What an older flag becomes on the `calc` command line.
#[derive(Clone, Copy, Debug)]
pub enum Becomes {
    /// The table's input of this name, its value as typed.
    Input(&'static str),
    /// The unit flag of the table's input `.0`: old codes → the table's unit codes.
    UnitOf(&'static str, &'static [(&'static str, &'static str)]),
    /// The product chosen, its value through this map (empty: the catalog id as typed).
    Product(&'static [(&'static str, &'static str)]),
    /// The calculator's mode, by this map of values.
    Mode(&'static [(&'static str, &'static str)]),
    /// The product's strength: `strength` for a liquid, `purity` for a gas or dry chemical.
    Strength,
    /// The basis the strength was typed on: must be the one the table takes for the product.
    StrengthBasis,
    /// The full scale of the gas or dry feeder, by the product's form.
    FeederScale,
    /// Its unit: old codes → the table's mass-rate codes.
    FeederUnit,
    /// `--gas`: the product must be a gas (the table knows the form from the product).
    GasSwitch,
    /// `--pump ID`: the site profile's pump, its capacity and unit.
    SitePump,
    /// `--basin ID`: the site profile's contact basin, its volume, unit and baffling factor.
    SiteBasin,
    /// The dechlorinating agent as a formula: must be what the product is dosed as.
    Agent,
    /// Read no more: refused with this sentence (what to give instead).
    Refused(&'static str),
}

use Becomes::*;

/// One older subcommand: the calculator it stands for and how its flags translate.
pub struct Alias {
    pub command: &'static str,
    pub calculator: &'static str,
    pub flags: &'static [(&'static str, Becomes)],
    /// Inputs (or `mode`) the older command took a default for, given when the flag is absent;
    /// a `-unit` default only where its input is given (the older temperatures were °C).
    pub defaults: &'static [(&'static str, &'static str)],
}

const FLOW_UNITS: &[(&str, &str)] = &[
    ("mgd", "mgd"),
    ("m3d", "m3-per-day"),
    ("m3/d", "m3-per-day"),
    ("m³/d", "m3-per-day"),
    ("m3-per-day", "m3-per-day"),
];
const PUMP_UNITS: &[(&str, &str)] = &[
    ("gph", "gal-per-hour"),
    ("gal/h", "gal-per-hour"),
    ("gal-per-hour", "gal-per-hour"),
    ("lph", "l-per-hour"),
    ("l/h", "l-per-hour"),
    ("l-per-hour", "l-per-hour"),
];
const MASS_UNITS: &[(&str, &str)] = &[
    ("lb/d", "lb-per-day"),
    ("ppd", "lb-per-day"),
    ("lb-per-day", "lb-per-day"),
    ("kg/d", "kg-per-day"),
    ("kg-per-day", "kg-per-day"),
];
const VOLUME_UNITS: &[(&str, &str)] = &[("gal", "gal"), ("l", "l")];

/// The older coagulation command's names: the metal salts, then sodium aluminate, which the
/// coagulation calculator offers and the sludge estimate does not.
const COAGULATION_NAMES: &[(&str, &str)] = &[
    ("alum", "alum-liquid"),
    ("alum-14", "alum-liquid"),
    ("alum14", "alum-liquid"),
    ("ferric-chloride", "ferric-chloride"),
    ("FeCl3", "ferric-chloride"),
    ("ferric-sulfate", "ferric-sulfate"),
    ("Fe2(SO4)3", "ferric-sulfate"),
    ("pacl", "pacl"),
    ("sodium-aluminate", "sodium-aluminate"),
    ("NaAlO2", "sodium-aluminate"),
];

/// The older names of the metal salts alone (the sludge estimate's): the list above without
/// its last two, the aluminate's.
const COAGULANTS: &[(&str, &str)] = COAGULATION_NAMES.split_at(COAGULATION_NAMES.len() - 2).0;

const NO_PERISTALTIC: &str = "give the pump's output at 100 % with --pump-capacity and --pump-unit (the table sets a metering pump by its capacity)";
const NO_USABLE_RANGE: &str = "the table checks every setting against the engine's one usable range of a pump (common practice), not a range given per command";
const NO_FEED_WATER: &str = "the feed calculator takes no water; for the dose's effect on the water use 'molefeed ph-after'";
const NO_IONS: &str = "the table's pH adjustment takes the water's pH, alkalinity, temperature and --calcium-as-caco3 only; for the other ions use 'molefeed dose-for-ph'";

/// The flags of a dose fed through a pump or feeder, shared by the feeding aliases.
macro_rules! feed_flags {
    ($($more:expr),* $(,)?) => {
        &[
            ("flow", Input("flow")),
            ("flow-unit", UnitOf("flow", FLOW_UNITS)),
            ("product", Product(&[])),
            ("strength", Strength),
            ("strength-basis", StrengthBasis),
            ("sg", Input("specific-gravity")),
            ("pump-capacity", Input("pump-capacity")),
            ("pump-unit", UnitOf("pump-capacity", PUMP_UNITS)),
            ("feeder-capacity", FeederScale),
            ("feeder-unit", FeederUnit),
            ("gas", GasSwitch),
            ("pump", SitePump),
            ("pump-ml-per-rev", Refused(NO_PERISTALTIC)),
            ("pump-max-rpm", Refused(NO_PERISTALTIC)),
            ("usable-min", Refused(NO_USABLE_RANGE)),
            ("usable-max", Refused(NO_USABLE_RANGE)),
            $($more),*
        ]
    };
}

/// Every older subcommand with a calculator in the table.
pub static ALIASES: [Alias; 10] = TABLE;

/// The older subcommands' names, from [`ALIASES`].
pub const COMMANDS: [&str; 10] = commands(&TABLE);

const fn commands(table: &[Alias; 10]) -> [&'static str; 10] {
    let mut out = [""; 10];
    let mut i = 0;
    while i < out.len() {
        out[i] = table[i].command;
        i += 1;
    }
    out
}

const TABLE: [Alias; 10] = [
    Alias {
        command: "feed",
        calculator: "feed",
        flags: feed_flags![
            ("dose", Input("dose")),
            ("ph", Refused(NO_FEED_WATER)),
            ("temperature", Refused(NO_FEED_WATER)),
            ("alkalinity", Refused(NO_FEED_WATER)),
        ],
        defaults: &[],
    },
    Alias {
        command: "neutralize-feed",
        calculator: "ph-adjustment",
        flags: feed_flags![
            ("calcium-as-caco3", Input("calcium-hardness")),
            ("magnesium-as-caco3", Refused(NO_IONS)),
            ("magnesium-as-mg", Refused(NO_IONS)),
            (
                "calcium-as-ca",
                Refused("the table's pH adjustment takes calcium as CaCO3: --calcium-as-caco3")
            ),
            ("sodium", Refused(NO_IONS)),
            ("potassium", Refused(NO_IONS)),
            ("chloride", Refused(NO_IONS)),
            ("sulfate", Refused(NO_IONS)),
            ("tds", Refused(NO_IONS)),
            ("conductivity", Refused(NO_IONS)),
            ("calcium", Refused(super::water::CALCIUM_REFUSED)),
            ("magnesium", Refused(super::water::MAGNESIUM_REFUSED)),
        ],
        defaults: &[CELSIUS],
    },
    Alias {
        command: "chlorine",
        calculator: "free-chlorine",
        flags: feed_flags![
            ("demand", Input("chlorine-demand")),
            ("residual", Input("target-residual")),
            (
                "residual-limit",
                Refused(
                    "the residual is checked against the site profile's chlorine limit (--site FILE), or the regulatory default"
                )
            ),
            (
                "chloramine-ratio",
                Refused(
                    "the ammonia for a chloramine residual is its own calculator: 'molefeed calc chloramine --chlorine-dose D --cl2-n-ratio R'"
                )
            ),
        ],
        defaults: &[CELSIUS],
    },
    Alias {
        command: "dechlor",
        calculator: "dechlorination",
        flags: feed_flags![
            ("residual", Input("residual-in")),
            ("agent", Agent),
            (
                "field-dose",
                Refused(
                    "the table gives the dose the balanced reaction needs; feed more only on a residual test"
                )
            ),
        ],
        defaults: &[],
    },
    Alias {
        command: "coagulation",
        calculator: "coagulation",
        flags: feed_flags![
            ("coagulant", Product(COAGULATION_NAMES)),
            ("dose", Input("jar-dose")),
            ("setpoint", Input("alkalinity-setpoint")),
            (
                "alkali",
                Mode(&[
                    ("lime", "alkali-lime"),
                    ("hydrated-lime", "alkali-lime"),
                    ("Ca(OH)2", "alkali-lime"),
                    ("caustic", "alkali-caustic"),
                    ("sodium-hydroxide", "alkali-caustic"),
                    ("NaOH", "alkali-caustic"),
                    ("soda-ash", "alkali-soda-ash"),
                    ("Na2CO3", "alkali-soda-ash"),
                ])
            ),
            (
                "alkali-purity",
                Refused(
                    "the table gives the supplemental alkali as the pure compound; divide by the product's purity when you weigh it"
                )
            ),
            (
                "basicity",
                Refused("PACl's basicity comes from the product catalog")
            ),
        ],
        // What the older command assumed when these were left out.
        defaults: &[
            ("alkalinity-setpoint", "0"),
            ("mode", "alkali-lime"),
            CELSIUS,
        ],
    },
    Alias {
        command: "soften",
        calculator: "softening",
        flags: &[
            ("flow", Input("flow")),
            ("flow-unit", UnitOf("flow", FLOW_UNITS)),
            ("product", Product(&[])),
            (
                "co2",
                Refused(
                    "the table works the free CO2 out from --ph, --alkalinity and --temperature",
                ),
            ),
            (
                "nch",
                Refused(
                    "give --total-hardness and --calcium-hardness (mg/L as CaCO3); the table works out the non-carbonate hardness",
                ),
            ),
            ("magnesium", Refused(MAGNESIUM_SOFTEN)),
            ("magnesium-as-mg", Refused(MAGNESIUM_SOFTEN)),
            ("magnesium-as-caco3", Refused(MAGNESIUM_SOFTEN)),
        ],
        defaults: &[CELSIUS],
    },
    Alias {
        command: "pump-check",
        calculator: "pump-check",
        flags: &[
            ("flow", Input("flow")),
            ("flow-unit", UnitOf("flow", FLOW_UNITS)),
            ("product", Product(&[])),
            ("strength", Strength),
            ("strength-basis", StrengthBasis),
            ("sg", Input("specific-gravity")),
            ("drawdown-ml", Input("drawdown-volume")),
            ("seconds", Input("drawdown-time")),
            ("target-dose", Input("dose")),
            ("current-setting", Input("pump-setting")),
            ("catch-g", Refused(NO_OTHER_TEST)),
            ("tank-drop", Refused(NO_OTHER_TEST)),
            ("length-unit", Refused(NO_OTHER_TEST)),
            ("tank-diameter", Refused(NO_OTHER_TEST)),
            ("tank-length", Refused(NO_OTHER_TEST)),
            ("tank-width", Refused(NO_OTHER_TEST)),
            ("minutes", Refused(NO_OTHER_TEST)),
            (
                "tolerance",
                Refused("the table judges the deviation against its one tolerance"),
            ),
            (
                "check-pump-at",
                Refused("the table judges the deviation against its one tolerance"),
            ),
        ],
        defaults: &[],
    },
    Alias {
        command: "ct",
        calculator: "ct",
        flags: &[
            ("flow", Input("flow")),
            ("flow-unit", UnitOf("flow", FLOW_UNITS)),
            ("contact-minutes", Input("t10")),
            ("volume", Input("basin-volume")),
            ("volume-unit", UnitOf("basin-volume", VOLUME_UNITS)),
            ("baffling", Input("baffling-factor")),
            ("basin", SiteBasin),
        ],
        defaults: &[CELSIUS],
    },
    Alias {
        command: "dilute",
        calculator: "dilution",
        flags: &[
            ("product", Product(&[])),
            ("strength", Strength),
            ("strength-basis", StrengthBasis),
            ("target-basis", StrengthBasis),
            ("sg", Input("specific-gravity")),
            ("target-sg", Input("target-specific-gravity")),
            ("volume", Input("final-volume")),
            ("volume-unit", UnitOf("final-volume", VOLUME_UNITS)),
        ],
        defaults: &[],
    },
    Alias {
        command: "sludge",
        calculator: "sludge",
        flags: &[
            ("flow", Input("flow")),
            ("flow-unit", UnitOf("flow", FLOW_UNITS)),
            ("coagulant", Product(COAGULANTS)),
            (
                "basicity",
                Refused("PACl's basicity comes from the product catalog"),
            ),
            (
                "turbidity",
                Refused(
                    "give the suspended solids removed with --suspended-solids (mg/L), from the plant's own solids-to-turbidity ratio",
                ),
            ),
            (
                "ss-per-ntu",
                Refused(
                    "give the suspended solids removed with --suspended-solids (mg/L), from the plant's own solids-to-turbidity ratio",
                ),
            ),
        ],
        defaults: &[],
    },
];

/// The older commands read a temperature in °C.
const CELSIUS: (&str, &str) = ("temperature-unit", "celsius");

const NO_OTHER_TEST: &str = "this older form takes a drawdown (--drawdown-ml and --seconds); \
    for a dry or gas feeder's weighed catch use 'molefeed calc pump-check --catch-mass G \
    --catch-time S --feeder-setting P'";
const MAGNESIUM_SOFTEN: &str = "softening takes the hardness, not the magnesium: --total-hardness and --calcium-hardness, both mg/L as CaCO3 (the magnesium is their difference)";

/// The flags every alias passes on to `calc` unchanged.
const PASSED_ON: [&str; 8] = [
    "site",
    "units",
    "log",
    "initials",
    "tap",
    "device",
    "max-use-level",
    "mode",
];

/// The alias called `command`, if it is one.
pub fn find(command: &str) -> Option<&'static Alias> {
    ALIASES.iter().find(|a| a.command == command)
}

/// The `calc` command line an alias's flags make, as words (the calculator id first).
pub struct Translation {
    words: Vec<String>,
    given: std::collections::BTreeSet<String>,
}

impl Translation {
    fn set(&mut self, name: &str, value: impl Into<String>) -> Result<(), CliError> {
        if !self.given.insert(name.to_string()) {
            return Err(CliError::usage(format!(
                "--{name} is given twice (by two flags of this command)"
            )));
        }
        self.words.push(format!("--{name}"));
        self.words.push(value.into());
        Ok(())
    }

    fn has(&self, name: &str) -> bool {
        self.given.contains(name)
    }
}

fn mapped(
    flag: &str,
    value: &str,
    map: &[(&'static str, &'static str)],
) -> Result<&'static str, CliError> {
    map.iter()
        .find(|(old, _)| old.eq_ignore_ascii_case(value.trim()))
        .map(|(_, new)| *new)
        .ok_or_else(|| {
            let mut accepted: Vec<&str> = map.iter().map(|(old, _)| *old).collect();
            accepted.dedup();
            CliError::usage(format!(
                "--{flag} '{value}' is not one the calculator table takes: use one of {}",
                accepted.join(", ")
            ))
        })
}

fn number(value: f64) -> String {
    format!("{value}")
}

fn volume_rate_unit(unit: VolumeRateUnit) -> Result<&'static str, CliError> {
    mapped("pump-unit", unit.symbol(), PUMP_UNITS)
}

fn mass_rate_unit(unit: MassRateUnit) -> Result<&'static str, CliError> {
    mapped("feeder-unit", unit.symbol(), MASS_UNITS)
}

fn volume_unit(unit: VolumeUnit) -> Result<&'static str, CliError> {
    mapped("volume-unit", unit.symbol(), VOLUME_UNITS)
}

/// The scale input of the pump or feeder a product of `form` is set with.
fn scale_input(form: FeedForm) -> &'static str {
    match form {
        FeedForm::Liquid => "pump-capacity",
        FeedForm::Gas => "gas-feeder-capacity",
        FeedForm::Dry => "dry-feeder-capacity",
    }
}

/// A pump or feeder of the site as the table's scale input and unit, for a product of `form`.
fn scale_of(
    kind: PumpKind,
    form: FeedForm,
) -> Result<(&'static str, String, &'static str), CliError> {
    let (input, capacity, unit) = match kind {
        PumpKind::Metering { capacity, unit } => {
            ("pump-capacity", capacity, volume_rate_unit(unit)?)
        }
        PumpKind::GasFeeder { capacity, unit } => {
            ("gas-feeder-capacity", capacity, mass_rate_unit(unit)?)
        }
        PumpKind::DryFeeder { capacity, unit } => {
            ("dry-feeder-capacity", capacity, mass_rate_unit(unit)?)
        }
        PumpKind::Peristaltic { .. } => return Err(CliError::usage(NO_PERISTALTIC)),
    };
    if input != scale_input(form) {
        return Err(CliError::usage(format!(
            "the site's pump is a {input} device, but the product is fed as a {}",
            form.code()
        )));
    }
    Ok((input, number(capacity), unit))
}

/// The product the alias's flags name, resolved through the site profile: its catalog id, and
/// the delivered product when the name was the site's.
fn product<'s>(
    alias: &Alias,
    args: &Args,
    site: Option<&'s SiteProfile>,
) -> Result<Option<(String, Option<&'s DeliveredProduct>)>, CliError> {
    let mut named: Option<String> = None;
    for (flag, becomes) in alias.flags {
        let Product(map) = becomes else { continue };
        let Some(text) = args.text(flag)? else {
            continue;
        };
        let id = if map.is_empty() {
            text.to_string()
        } else {
            mapped(flag, text, map)?.to_string()
        };
        if named.as_ref().is_some_and(|n| *n != id) {
            return Err(CliError::usage(format!(
                "--{flag} {text} names another product than the one already given"
            )));
        }
        named = Some(id);
    }
    let Some(id) = named else { return Ok(None) };
    let delivered = site.and_then(|s| s.delivered(&id).ok());
    Ok(Some(match delivered {
        Some(d) => (d.product.clone(), Some(d)),
        None => (id, None),
    }))
}

/// Rewrites an alias's command line into its calculator's `calc` command line.
pub fn translate(alias: &Alias, args: &Args) -> Result<Vec<String>, CliError> {
    let calc: &Calculator = calculators::find(alias.calculator)?;
    let table = Calculators::new()?;
    let mut t = Translation {
        words: vec![calc.id.to_string()],
        given: Default::default(),
    };
    let site = match args.text("site")? {
        Some(path) => Some(SiteProfile::from_json(
            &super::read_input_file(path, "site profile")?,
            table.catalog(),
        )?),
        None => None,
    };
    let chosen = product(alias, args, site.as_ref())?;
    let catalog_product = chosen
        .as_ref()
        .and_then(|(id, _)| table.catalog().product(id).ok());
    let choice = chosen
        .as_ref()
        .and_then(|(id, _)| table.products(calc).into_iter().find(|p| p.id == *id));
    let form = choice.as_ref().map_or(FeedForm::Liquid, |c| c.form);
    if let Some((id, _)) = &chosen {
        t.set("product", id.clone())?;
    }
    for (flag, becomes) in alias.flags {
        match *becomes {
            Product(_) => {}
            Input(input) => {
                if let Some(v) = args.text(flag)? {
                    t.set(input, v)?;
                }
            }
            UnitOf(input, map) => {
                if let Some(v) = args.text(flag)? {
                    t.set(&format!("{input}-unit"), mapped(flag, v, map)?)?;
                }
            }
            Mode(map) => {
                if let Some(v) = args.text(flag)? {
                    t.set("mode", mapped(flag, v, map)?)?;
                }
            }
            Strength => {
                if let Some(v) = args.text(flag)? {
                    let name = if form.by_mass() { "purity" } else { "strength" };
                    t.set(name, v)?;
                }
            }
            StrengthBasis => {
                if let Some(v) = args.text(flag)? {
                    let basis = crate::engine::dosing::catalog::StrengthBasis::parse(v)?;
                    if let Some(c) = &choice
                        && basis.code() != c.strength_basis
                    {
                        return Err(CliError::usage(format!(
                            "--{flag} {v}: the table takes the strength of {} as {}; give it on that basis",
                            c.id, c.strength_basis
                        )));
                    }
                }
            }
            FeederScale => {
                if let Some(v) = args.text(flag)? {
                    if !form.by_mass() {
                        return Err(CliError::usage(
                            "--feeder-capacity is for a gas or dry product; a liquid takes --pump-capacity",
                        ));
                    }
                    t.set(scale_input(form), v)?;
                }
            }
            FeederUnit => {
                if let Some(v) = args.text(flag)? {
                    t.set(
                        &format!("{}-unit", scale_input(form)),
                        mapped(flag, v, MASS_UNITS)?,
                    )?;
                }
            }
            GasSwitch => {
                if args.switch(flag) && form != FeedForm::Gas {
                    return Err(CliError::usage(
                        "--gas is for a gas product; the table feeds this product by its own form",
                    ));
                }
            }
            SitePump => {
                if let Some(id) = args.text(flag)? {
                    let s = site
                        .as_ref()
                        .ok_or_else(|| CliError::usage("--pump needs --site"))?;
                    let (input, capacity, unit) = scale_of(s.pump(id)?.kind, form)?;
                    t.set(input, capacity)?;
                    t.set(&format!("{input}-unit"), unit)?;
                }
            }
            SiteBasin => {
                if let Some(id) = args.text(flag)? {
                    let s = site
                        .as_ref()
                        .ok_or_else(|| CliError::usage("--basin needs --site"))?;
                    let b = s
                        .contact_basins
                        .iter()
                        .find(|b| b.id == id)
                        .ok_or_else(|| {
                            CliError::usage(format!("no basin '{id}' in the site profile"))
                        })?;
                    t.set("basin-volume", number(b.volume))?;
                    t.set("basin-volume-unit", volume_unit(b.volume_unit)?)?;
                    t.set("baffling-factor", number(b.baffling_factor))?;
                }
            }
            Agent => {
                if let Some(agent) = args.text(flag)? {
                    if chosen.is_none() {
                        return Err(CliError::usage(format!(
                            "--agent {agent} needs --product: the agent as delivered (the table feeds a product)"
                        )));
                    }
                    // A product the catalog does not know is refused by `calc` itself.
                    let Some(p) = catalog_product else { continue };
                    let same = crate::engine::formula::Formula::parse(&p.dose_as)?
                        .same_composition(&crate::engine::formula::Formula::parse(agent)?);
                    if !same {
                        return Err(CliError::usage(format!(
                            "{} is dosed as {}, but --agent is {agent}",
                            p.id, p.dose_as
                        )));
                    }
                }
            }
            Refused(why) => {
                if args.text(flag).is_err() || args.text(flag)?.is_some() {
                    return Err(CliError::usage(format!(
                        "'molefeed {}' no longer reads --{flag}: {why}",
                        alias.command
                    )));
                }
            }
        }
    }
    // The table's own input names (and their unit flags) pass under the alias too.
    for input in table.all_inputs(calc) {
        for name in [input.name.to_string(), format!("{}-unit", input.name)] {
            if alias.flags.iter().any(|(f, _)| *f == name) {
                continue;
            }
            if let Some(v) = args.text(&name)? {
                t.set(&name, v)?;
            }
        }
        // Its name before a rename (`--ph-raw`), read as the input itself.
        if let Some(former) = input.former_name
            && let Some(v) = args.text(former)?
        {
            t.set(input.name, v)?;
        }
    }
    for flag in PASSED_ON {
        if t.has(flag) {
            continue;
        }
        if let Some(v) = args.text(flag)? {
            t.set(flag, v)?;
        }
    }
    // A delivered product of the site brings its strength, SG, maximum use level and pump.
    if let Some((_, Some(d))) = &chosen {
        site_product(
            &mut t,
            d,
            site.as_ref(),
            form,
            choice.as_ref().map(|c| c.strength_basis),
        )?;
    }
    for (name, value) in alias.defaults {
        let unit_of = name.strip_suffix("-unit");
        let input_given = unit_of.is_none_or(|input| t.has(input));
        if t.has(name) || !input_given {
            continue;
        }
        // The older command read this input in its own unit whatever the printout's units;
        // `--units` now says otherwise for every input, so which one was meant is not known.
        if let Some(input) = unit_of
            && t.has("units")
        {
            return Err(CliError::usage(format!(
                "'molefeed {}' reads --{input} in {value}, but --units is given too: \
                 say which with --{name}",
                alias.command
            )));
        }
        t.set(name, *value)?;
    }
    if args.switch("json") {
        t.words.push("--json".into());
    }
    Ok(t.words)
}

/// The strength, SG, maximum use level and pump or feeder a delivered product brings, where
/// the flags did not give them.
fn site_product(
    t: &mut Translation,
    d: &DeliveredProduct,
    site: Option<&SiteProfile>,
    form: FeedForm,
    basis: Option<&'static str>,
) -> Result<(), CliError> {
    let strength = if form.by_mass() { "purity" } else { "strength" };
    if !t.has(strength) {
        if Some(d.strength_basis.code()) != basis {
            return Err(CliError::usage(format!(
                "the site's {} is rated {} % {}, but the table takes this product's strength as {}: give --strength on that basis",
                d.id,
                d.strength,
                d.strength_basis.code(),
                basis.unwrap_or("-")
            )));
        }
        t.set(strength, number(d.strength))?;
    }
    if let Some(sg) = d.sg
        && !form.by_mass()
        && !t.has("specific-gravity")
    {
        t.set("specific-gravity", number(sg))?;
    }
    if let Some(level) = d.max_use_level_mg_l
        && !t.has("max-use-level")
    {
        t.set("max-use-level", number(level))?;
    }
    let scale = scale_input(form);
    if !t.has(scale)
        && let Some(pump) = site.and_then(|s| s.pump_for(&d.id))
    {
        let (input, capacity, unit) = scale_of(pump.kind, form)?;
        t.set(input, capacity)?;
        t.set(&format!("{input}-unit"), unit)?;
    }
    Ok(())
}

/// Runs the alias called `command`.
pub fn run_command(command: &str, args: &Args) -> CliResult {
    let alias = find(command)
        .ok_or_else(|| CliError::usage(format!("'{command}' is not an older dosing command")))?;
    run(alias, args)
}

/// Runs an alias: its `calc` command line through `calc`, every flag of both read.
pub fn run(alias: &Alias, args: &Args) -> CliResult {
    let words = translate(alias, args)?;
    // Every flag the alias knows has been read: a misspelt one is named before any number.
    args.reject_unused()?;
    let calc_args = Args::parse(&words)?;
    let report = super::calc::run(&calc_args).map_err(|e| hint(alias, e))?;
    calc_args.reject_unused().map_err(|e| CliError {
        message: format!(
            "{}: 'molefeed {}' runs 'molefeed calc {}', which does not take it here (with this product, see 'molefeed calc {} --help')",
            e.message, alias.command, alias.calculator, alias.calculator
        ),
        ..e
    })?;
    Ok(report)
}

/// A missing input named with the older flag that gives it, where there is one.
fn hint(alias: &Alias, mut e: CliError) -> CliError {
    if e.reason == Some("missing-input") {
        let input = e
            .message
            .split_whitespace()
            .next()
            .unwrap_or_default()
            .to_string();
        let old: Vec<String> = alias
            .flags
            .iter()
            .filter(|(f, b)| *f != input && matches!(b, Input(i) if *i == input))
            .map(|(f, _)| format!("--{f}"))
            .collect();
        let give = if old.is_empty() {
            format!("--{input}")
        } else {
            format!("{} (or --{input})", old.join(" or "))
        };
        e.message = format!(
            "{}: 'molefeed {}' runs 'molefeed calc {}', which needs {give}",
            e.message, alias.command, alias.calculator
        );
    } else if e.reason == Some("no-product-chosen") {
        e.message = format!(
            "{}: 'molefeed {}' runs 'molefeed calc {}', which needs --product (see 'molefeed calc {} --help')",
            e.message, alias.command, alias.calculator, alias.calculator
        );
    }
    e
}

/// Help for an alias: how its flags translate.
pub fn help(alias: &Alias) -> String {
    let mut out = format!(
        "'molefeed {}' is 'molefeed calc {}' under its older flags, which translate as:\n",
        alias.command, alias.calculator
    );
    for (flag, becomes) in alias.flags {
        let what = match becomes {
            Input(i) if i == flag => "the same".into(),
            Input(i) => format!("--{i}"),
            UnitOf(i, map) => format!(
                "--{i}-unit ({})",
                map.iter()
                    .map(|(old, new)| format!("{old} → {new}"))
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
            Product(_) => "--product".into(),
            Mode(_) => "--mode".into(),
            Strength => "--strength (a liquid) or --purity (a gas or dry product)".into(),
            StrengthBasis => "checked: must be the product's basis in the table".into(),
            FeederScale => "--gas-feeder-capacity or --dry-feeder-capacity".into(),
            FeederUnit => "their -unit".into(),
            GasSwitch => "checked: the product must be a gas".into(),
            SitePump => "the site pump's capacity and unit".into(),
            SiteBasin => "the site basin's volume, unit and baffling factor".into(),
            Agent => "checked: what the product is dosed as".into(),
            Refused(why) => format!("refused: {why}"),
        };
        out.push_str(&format!("  --{flag:<20} {what}\n"));
    }
    for (name, value) in alias.defaults {
        out.push_str(&match name.strip_suffix("-unit") {
            Some(input) => format!("  --{input} without its unit is in {value}\n"),
            None => format!("  without --{name}: {value}\n"),
        });
    }
    out.push_str("The calculator's own flags are accepted too.\n");
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every alias names a calculator of the table, and every input it maps to is one of that
    /// calculator's inputs: a row left behind by a change to the table fails here.
    #[test]
    fn every_translation_lands_on_the_table() {
        let table = Calculators::new().unwrap();
        for alias in &ALIASES {
            let calc = calculators::find(alias.calculator).unwrap();
            let inputs: Vec<&str> = table.all_inputs(calc).iter().map(|i| i.name).collect();
            for (flag, becomes) in alias.flags {
                let target = match becomes {
                    Input(i) | UnitOf(i, _) => Some(*i),
                    _ => None,
                };
                if let Some(i) = target {
                    assert!(inputs.contains(&i), "{} --{flag} → {i}", alias.command);
                }
                if let Mode(map) = becomes {
                    for (_, m) in *map {
                        assert!(calc.modes.contains(m), "{} mode {m}", alias.command);
                    }
                }
                if let Product(map) = becomes {
                    let offered: Vec<String> =
                        table.products(calc).into_iter().map(|p| p.id).collect();
                    for (_, p) in *map {
                        assert!(offered.iter().any(|o| o == p), "{} {p}", alias.command);
                    }
                }
            }
            for (name, _) in alias.defaults {
                let input = name.strip_suffix("-unit").unwrap_or(name);
                assert!(*name == "mode" || inputs.contains(&input), "{name}");
            }
        }
    }

    #[test]
    fn unit_maps_name_units_of_the_table() {
        let codes: Vec<&str> = crate::engine::quantity::Unit::ALL
            .iter()
            .map(|u| u.code())
            .collect();
        for map in [FLOW_UNITS, PUMP_UNITS, MASS_UNITS, VOLUME_UNITS] {
            for (_, new) in map {
                assert!(codes.contains(new), "{new}");
            }
        }
    }
}
