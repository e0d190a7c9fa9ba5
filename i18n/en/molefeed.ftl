# Molefeed — English. Keys are kebab-case; every key must also exist in es/molefeed.ftl.

## Navigation
nav-start = Start
nav-calculators = Calculate
nav-plots = Plots
nav-log = Log
nav-settings = Settings
nav-about = About

## Start
banner-not-saved = Not saved: logged doses are kept only until the app closes.
start-title = Today at the plant
start-site = Site
start-point = Sampling tap
start-latest = Latest logged doses
start-latest-none = Nothing logged yet at this site.
start-quick = Open a calculator

## Calculators
calc-ph-control = pH adjustment
calc-chlorination = Chlorination
calc-coagulation = Coagulation
calc-softening = Softening
calc-pump-check = Pump cross-check
calc-feed-setting = Feed & pump setting
mode-standard = Standard
mode-free-chlorine = Free chlorine
mode-chloramine = Chloramine
mode-dechlorination = Dechlorination
calc-inputs = Measurements
calc-result = Result
calc-incomplete = Fill in every measurement to see the feed.
calc-invalid = Some entries are not numbers. Fix the marked fields; no result is shown until then.
calc-not-connected = This calculation is not available in this build yet. No number is shown rather than a guess.
calc-log-dose = Log this dose
calc-show-work = Show the work
calc-hide-work = Hide the work
calc-cautions = Cautions
calc-no-cautions = The engine raised no cautions for these inputs. Check them against your plant's limits.
calc-cautions-pending = Cautions appear with the result.
advisory-note = Advisory only: a licensed operator decides the feed, under the plant's permit and local codes.

## Result figures
result-dose = Dose
result-feed = Feed mass per day
result-product = Product volume rate
result-pump = Pump setting

## Input fields
field-flow = Flow
field-ph-raw = pH before treatment
field-ph-target = Target pH
field-alkalinity = Alkalinity
field-temperature = Water temperature
field-residual-target = Target residual
field-chlorine-dose = Chlorine dose applied
field-cl2-n-ratio = Chlorine to ammonia-N ratio
field-ph = pH
field-residual-in = Residual to remove
field-chlorine-demand = Chlorine demand
field-jar-dose = Jar-test dose
field-total-hardness = Total hardness
field-calcium-hardness = Calcium hardness
field-drawdown-volume = Drawdown volume
field-drawdown-time = Drawdown time
field-pump-setting = Current pump setting
field-dose = Dose wanted
field-strength = Product strength
field-specific-gravity = Product specific gravity
field-pump-capacity = Pump capacity at 100 %

## Units
unit-m3-per-day = m³/d
unit-mgd = MGD
unit-mg-per-l = mg/L
unit-mg-per-l-caco3 = mg/L as CaCO₃
unit-ph = pH
unit-celsius = °C
unit-fahrenheit = °F
unit-kg-per-day = kg/d
unit-lb-per-day = lb/d
unit-l-per-hour = L/h
unit-gal-per-hour = gal/h
unit-percent = %
unit-none = { "" }
unit-ml = mL
unit-s = s
unit-ratio = : 1

## Number entry
number-empty = Enter a number.
number-invalid = Not a number. Use digits and one decimal point.
number-ambiguous = Could be read two ways. Type digits and one decimal mark, without thousands separators.
number-wrong-mark = Use a point for decimals (2.5), not a comma.

## Cautions
caution-level-info = Note
caution-level-warning = Warning
caution-level-danger = Danger

## Engine errors (keyed by ErrorKind code)
error-syntax = That is not a formula, reaction or number the app can read.
error-unknown-element = { $message }: not an element of the periodic table.
error-unbalanced-parenthesis = A bracket is opened without being closed, or the other way round.
error-empty-group = A bracket pair has nothing inside.
error-zero-count = A count of zero is not allowed.
error-overflow = A number is too large to handle exactly.
error-impossible = No balanced reaction conserves every element and charge.
error-ambiguous = More than one balanced reaction fits; give more detail.
error-species-on-both-sides = The same substance is written on both sides.
error-wrong-coefficient = A coefficient does not conserve atoms or charge.
error-not-in-reaction = That substance is not part of the reaction.
error-unknown-chemical = That chemical is not in the catalog.
error-out-of-range = { $quantity } { $value } is outside { $min }–{ $max } { $unit }.
error-unreachable = The chosen chemical cannot reach that target.
error-invalid-input = { $quantity } must be a number.

## Log
log-title = Dose log
log-filter = Filter by site, point or chemical
log-empty = No entries match.
log-detail = Entry
log-pick-entry = Tap an entry to see it here.
log-history = History
log-transfer = Export and import
log-path = File path
log-export = Export
log-import = Import
log-exported = Exported { $count } entries.
log-imported = Imported { $count } entries.
log-io-error = Could not use the file: { $detail }
log-saved = Logged as entry { $id }.
log-nothing-to-log = There is no dose to log yet.
log-error-bad-dose = This dose cannot be logged: { $detail }
log-field-when = When (UTC)
log-field-site = Site
log-field-point = Point
log-field-chemical = Chemical
log-field-note = Note

## Plots
plot-titration = Titration curve
plot-trend = Dose trend
plot-ph-axis = pH
plot-dose-axis = mg/L
plot-titrant-axis = Titrant added, mg/L
plot-entries-axis = Logged entries, oldest to newest
plot-need-ph-inputs = Fill in the pH adjustment measurements to draw the curve.
plot-need-two = At least two logged doses of one chemical at one point are needed for a trend.
plot-no-log = Nothing logged yet.
plot-no-data = No data to draw.

## Settings
settings-title = Settings
settings-language = Language
settings-units = Units
settings-units-us = US customary
settings-units-si = Metric (SI)
settings-contrast = Display
settings-contrast-normal = Standard
settings-contrast-high = High contrast
settings-site = Site
settings-site-name = Site name
settings-rename = Rename
settings-points = Sampling taps
settings-points-hint = Tap a name to choose it; rename changes the chosen tap.
settings-remove = Remove
settings-edit = Edit
settings-tap-name = Tap name
settings-rename-tap = Rename tap
settings-add-tap = Add tap
settings-add-site = Add as new site
settings-reset-demo = Replace this site with the demo plant
settings-reset-confirm = This replaces the taps, products, pumps and limits of this site. The dose log is not changed.
settings-reset-yes = Yes, replace
settings-cancel = Cancel
settings-site-profile = Site profile
settings-products = Products as delivered
settings-catalog-product = Product
settings-basis = Strength expressed as
settings-certificate = Certificate of analysis
settings-save-product = Save product
settings-pumps = Metering pumps
settings-pump-name = Pump name
settings-pump-product = Feeds
settings-pump-unit = Capacity unit
settings-save-pump = Save pump
settings-limits = Plant permit limits
settings-limit-parameter = Parameter (for example chlorine, ph)
settings-limit-unit = Unit
settings-limit-source = Source (permit, rule)
settings-save-limit = Save limit
settings-default-limits = Regulatory defaults in force where the permit sets nothing
site-strength = Strength (%)
site-sg = Specific gravity
site-capacity = Capacity at 100 %
site-limit-min = Minimum
site-limit-max = Maximum
site-basis-weight = by weight
site-basis-trade = trade (g/L Cl₂ ÷ 10)
site-basis-available-chlorine = as available chlorine
site-basis-as-al2o3 = as Al₂O₃
site-basis-purity = purity
site-pump-peristaltic = peristaltic pump
site-pump-dry = dry feeder
site-pump-gas = gas feeder
site-saved = Saved in the site profile.
site-invalid = Not saved: { $detail }
site-number-problem = { $field }: { $problem }
site-number-missing = { $field } is needed.
site-need-name = Type a name first.
site-tap-exists = This site already has a tap with that name.
site-pick-product = Choose a product first.
site-pick-basis = Choose what the strength is expressed as.
site-product-in-use = Not removed: { $pump } still feeds this product. Remove or change the pump first.
site-pump-needs-liquid = A metering pump feeds a liquid: choose a liquid product.
site-pump-not-metering = That name belongs to a pump that is not a metering pump; this editor changes metering pumps only. Choose another name.
site-need-parameter = Name the parameter the limit is for.
site-limit-empty = Give a minimum, a maximum, or both.
site-limit-reversed = The minimum is above the maximum.
site-need-source = Say where the limit comes from (permit, rule).
caution-site-limit-above = { $field } { $value } is above this site's limit of { $limit } { $unit } ({ $source }).
caution-site-limit-below = { $field } { $value } is below this site's minimum of { $limit } { $unit } ({ $source }).

## About
about-advisory = Molefeed works the chemistry from your measurements. Its results are advice, not instructions: a licensed operator decides every feed, under the plant's permit and local codes.
about-sources = Data sources
about-sources-weights = Atomic weights: IUPAC standard atomic weights, embedded in the app.
about-sources-engine = Equilibrium constants and product data: listed with each calculation's worked steps.
about-licenses = Licenses
about-license-app = Molefeed: MIT or Apache-2.0.
about-license-font = DejaVu Sans font: Bitstream Vera license (DejaVu changes in the public domain).
about-license-slint = User interface built with Slint, used under the Slint Royalty-free Desktop, Mobile, and Web Applications License 2.0.

## Products (engine catalog name keys)
product-chlorine-gas = Chlorine gas
product-sodium-hypochlorite = Sodium hypochlorite
product-calcium-hypochlorite = Calcium hypochlorite
product-alum-liquid = Liquid alum
product-alum-dry = Dry alum
product-ferric-chloride = Ferric chloride
product-ferric-sulfate = Ferric sulfate
product-pacl = Polyaluminium chloride (PACl)
product-sodium-hydroxide = Sodium hydroxide (caustic soda)
product-hydrated-lime = Hydrated lime
product-quicklime = Quicklime
product-soda-ash = Soda ash
product-sulfur-dioxide = Sulfur dioxide
product-sodium-bisulfite = Sodium bisulfite
product-sodium-metabisulfite = Sodium metabisulfite
product-sodium-sulfite = Sodium sulfite
product-sodium-thiosulfate = Sodium thiosulfate
product-ascorbic-acid = Ascorbic acid
product-aqua-ammonia = Aqua ammonia
product-ammonium-sulfate = Ammonium sulfate
product-sulfuric-acid = Sulfuric acid
product-hydrochloric-acid = Hydrochloric acid

## Engine cautions (keys as the engine emits them)
hazard-toxic-gas = Toxic gas. Work only with leak detection, ventilation and a second person present.
hazard-toxic-vapour = Gives off toxic, irritating vapour. Keep containers closed and ventilate.
hazard-corrosive = Corrosive to skin, eyes and metals.
hazard-corrosive-mild = Acidic and irritating to skin and eyes.
hazard-corrosive-acid = Strong acid: severe burns to skin and eyes.
hazard-corrosive-caustic = Strong alkali: severe burns to skin and eyes; eye damage is rapid.
hazard-oxidizer = Strong oxidizer: keep away from fuels, organics and reducing agents.
hazard-irritant = Irritating to skin, eyes and airways.
hazard-irritant-dust = Dust irritates eyes and airways.
hazard-stains = Stains concrete, clothing and equipment.
hazard-heat-on-dilution = Releases heat when diluted; can boil and spatter.
hazard-heat-on-slaking = Releases heat when it meets water (slaking).
hazard-releases-so2-with-acid = Releases sulfur dioxide gas in contact with acid.
ppe-scba-gas = Self-contained breathing apparatus available for leak response.
ppe-face-shield-gloves = Wear face shield, goggles, chemical gloves and apron.
ppe-dust-mask-goggles = Wear dust mask, goggles and gloves when handling.
incompatible-acid-hypochlorite-chlorine-gas = Never mix acids with hypochlorite: chlorine gas is released.
incompatible-ammonia-chloramine-gas = Never mix ammonia with chlorine or hypochlorite concentrates: toxic chloramine gases.
incompatible-organics-oxidizer = Keep away from organic materials and fuels: fire risk.
incompatible-alkali-heat = Reacts with alkalis, releasing heat.
incompatible-acid-caustic-heat = Acids and alkalis react violently, releasing heat.
incompatible-water-into-concentrate = Never add water to the concentrate: always add the chemical slowly to water.
incompatible-water-quicklime-heat = Quicklime and water generate intense heat: slake only in the slaker.
incompatible-oxidizer-reducer = Reducing agent: keep away from chlorine, hypochlorite and other oxidizers.
incompatible-acid-releases-so2 = Acids release sulfur dioxide gas from this product.
incompatible-alkali-releases-ammonia = Alkalis release ammonia gas from this product.
pump-over-capacity = The feed needs { $percent } % of the pump's output: beyond its capacity.
pump-above-usable-range = Setting { $percent } % is above the usable range (max { $max } %).
pump-below-usable-range = Setting { $percent } % is below the usable range (min { $min } %): accuracy suffers; consider a smaller pump or a weaker solution.
setting-fraction-of-percent = The setting is a fraction of a percent ({ $percent } %): the pump cannot feed this accurately.
dose-above-max-use-level = Product dose { $product_mg_l } mg/L exceeds the product's maximum use level ({ $max_use_level_mg_l } mg/L).
strength-unusual = Strength { $strength } % ({ $basis }) is far from the usual { $typical } %: check the certificate and the basis.
sg-from-density-table = No SG was given: { $sg } is taken from the product's density table at { $temperature_c } °C.
add-chemical-to-water = Fill the water first, then add the chemical slowly.
zero-dose = The calculated dose is zero.
pump-check-within-tolerance = The measured feed is within tolerance of the target: no change needed.
pump-check-adjust = The measured dose is { $deviation_percent } % off target: multiply the pump setting by { $factor }.
pump-check-inspect = The measured dose is { $deviation_percent } % off target: inspect the pump, lines and valves before adjusting.
breakpoint-practice-range = In practice, breakpoint takes { $low }:1 to { $high }:1 Cl₂:NH₃-N.
residual-above-limit = Target residual { $residual_mg_l } mg/L is above the limit { $limit_mg_l } mg/L.
ph-alkalinity-effect-from-water-engine = The effect on pH and alkalinity is calculated by the water-chemistry module.

settings-initials = Operator initials
log-need-initials = Enter your initials in Settings first: each logged dose records who set it.
log-error-not-saved = Not saved: { $detail }. The entry is kept on this device and saved again with the next one.
log-error-locked = The dose log is open in another copy of the app: { $detail }
log-error-invalid-entry = This entry cannot be logged: { $detail }
