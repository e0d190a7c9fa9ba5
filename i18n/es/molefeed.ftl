# Molefeed — español. Cada clave debe existir también en en/molefeed.ftl.

## Navegación
nav-start = Inicio
nav-calculators = Calcular
nav-plots = Gráficas
nav-log = Registro
nav-settings = Ajustes
nav-about = Acerca de

## Inicio
banner-not-saved = Sin guardar: las dosis registradas se conservan solo hasta cerrar la app.
start-title = Hoy en la planta
start-site = Sitio
start-point = Toma de muestra
start-latest = Últimas dosis registradas
start-latest-none = Aún no hay registros en este sitio.
start-quick = Abrir una calculadora

## Calculadoras
calc-ph-control = Ajuste de pH
calc-chlorination = Cloración
calc-coagulation = Coagulación
calc-softening = Ablandamiento
calc-pump-check = Verificación de bomba
calc-feed-setting = Dosificación y bomba
mode-standard = Estándar
mode-free-chlorine = Cloro libre
mode-chloramine = Cloramina
mode-dechlorination = Decloración
calc-inputs = Mediciones
calc-result = Resultado
calc-incomplete = Complete todas las mediciones para ver la dosificación.
calc-invalid = Algunas entradas no son números. Corrija los campos marcados; no se muestra resultado hasta entonces.
calc-not-connected = Este cálculo aún no está disponible en esta versión. No se muestra un número en lugar de una suposición.
calc-log-dose = Registrar esta dosis
calc-show-work = Mostrar el cálculo
calc-hide-work = Ocultar el cálculo
calc-cautions = Precauciones
calc-no-cautions = El motor no señaló precauciones para estas entradas. Compárelas con los límites de su planta.
calc-cautions-pending = Las precauciones aparecen con el resultado.
advisory-note = Solo orientativo: un operador con licencia decide la dosificación, según el permiso de la planta y la normativa local.

## Cifras del resultado
result-dose = Dosis
result-feed = Masa por día
result-product = Caudal de producto
result-pump = Ajuste de bomba

## Campos
field-flow = Caudal
field-ph-raw = pH antes del tratamiento
field-ph-target = pH objetivo
field-alkalinity = Alcalinidad
field-temperature = Temperatura del agua
field-residual-target = Residual objetivo
field-chlorine-dose = Dosis de cloro aplicada
field-cl2-n-ratio = Relación cloro : N amoniacal
field-ph = pH
field-residual-in = Residual a eliminar
field-chlorine-demand = Demanda de cloro
field-jar-dose = Dosis de prueba de jarras
field-total-hardness = Dureza total
field-calcium-hardness = Dureza cálcica
field-drawdown-volume = Volumen de descenso
field-drawdown-time = Tiempo de descenso
field-pump-setting = Ajuste actual de la bomba
field-dose = Dosis deseada
field-strength = Concentración del producto
field-specific-gravity = Gravedad específica del producto
field-pump-capacity = Capacidad de la bomba al 100 %

## Unidades
unit-m3-per-day = m³/d
unit-mgd = MGD
unit-mg-per-l = mg/L
unit-mg-per-l-caco3 = mg/L como CaCO₃
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

## Entrada de números
number-empty = Escriba un número.
number-invalid = No es un número. Use cifras y una sola marca decimal.
number-ambiguous = Se puede leer de dos maneras. Escriba cifras y una marca decimal, sin separador de miles.
number-wrong-mark = Use un punto para los decimales (2.5), no una coma.

## Precauciones
caution-level-info = Nota
caution-level-warning = Advertencia
caution-level-danger = Peligro

## Errores del motor (por código de ErrorKind)
error-syntax = No es una fórmula, reacción o número que la app pueda leer.
error-unknown-element = { $message }: no es un elemento de la tabla periódica.
error-unbalanced-parenthesis = Hay un paréntesis abierto sin cerrar, o al revés.
error-empty-group = Un par de paréntesis no contiene nada.
error-zero-count = No se admite una cantidad cero.
error-overflow = Un número es demasiado grande para tratarlo con exactitud.
error-impossible = Ninguna reacción balanceada conserva todos los elementos y la carga.
error-ambiguous = Hay más de una reacción balanceada posible; dé más detalle.
error-species-on-both-sides = La misma sustancia aparece en ambos lados.
error-wrong-coefficient = Un coeficiente no conserva los átomos o la carga.
error-not-in-reaction = Esa sustancia no forma parte de la reacción.
error-unknown-chemical = Ese producto químico no está en el catálogo.
error-out-of-range = { $quantity } { $value } está fuera de { $min }–{ $max } { $unit }.
error-unreachable = El producto elegido no puede alcanzar ese objetivo.
error-invalid-input = { $quantity } debe ser un número.

## Registro
log-title = Registro de dosis
log-filter = Filtrar por sitio, punto o producto
log-empty = Ningún registro coincide.
log-detail = Registro
log-pick-entry = Toque un registro para verlo aquí.
log-history = Historial
log-transfer = Exportar e importar
log-path = Ruta del archivo
log-export = Exportar
log-import = Importar
log-exported = Se exportaron { $count } registros.
log-imported = Se importaron { $count } registros.
log-io-error = No se pudo usar el archivo: { $detail }
log-saved = Registrado como entrada { $id }.
log-nothing-to-log = Todavía no hay una dosis que registrar.
log-error-bad-dose = Esta dosis no se puede registrar: { $detail }
log-field-when = Cuándo (UTC)
log-field-site = Sitio
log-field-point = Punto
log-field-chemical = Producto
log-field-note = Nota

## Gráficas
plot-titration = Curva de titulación
plot-trend = Tendencia de dosis
plot-ph-axis = pH
plot-dose-axis = mg/L
plot-titrant-axis = Titulante añadido, mg/L
plot-entries-axis = Registros, del más antiguo al más reciente
plot-need-ph-inputs = Complete las mediciones de ajuste de pH para trazar la curva.
plot-need-two = Se necesitan al menos dos dosis registradas de un producto en un punto para ver la tendencia.
plot-no-log = Aún no hay registros.
plot-no-data = No hay datos que trazar.

## Ajustes
settings-title = Ajustes
settings-language = Idioma
settings-units = Unidades
settings-units-us = Sistema de EE. UU.
settings-units-si = Métrico (SI)
settings-contrast = Pantalla
settings-contrast-normal = Estándar
settings-contrast-high = Alto contraste
settings-site = Sitio
settings-site-name = Nombre del sitio
settings-rename = Renombrar
settings-points = Tomas de muestra
settings-points-hint = Toque un nombre para elegirlo; renombrar cambia la toma elegida.
settings-remove = Quitar
settings-edit = Editar
settings-tap-name = Nombre de la toma
settings-rename-tap = Renombrar toma
settings-add-tap = Añadir toma
settings-add-site = Añadir como sitio nuevo
settings-reset-demo = Sustituir este sitio por la planta de demostración
settings-reset-confirm = Se sustituyen las tomas, productos, bombas y límites de este sitio. El registro de dosis no cambia.
settings-reset-yes = Sí, sustituir
settings-cancel = Cancelar
settings-site-profile = Perfil del sitio
settings-products = Productos tal como se reciben
settings-catalog-product = Producto
settings-basis = Concentración expresada como
settings-certificate = Certificado de análisis
settings-save-product = Guardar producto
settings-pumps = Bombas dosificadoras
settings-pump-name = Nombre de la bomba
settings-pump-product = Dosifica
settings-pump-unit = Unidad de capacidad
settings-save-pump = Guardar bomba
settings-limits = Límites del permiso de la planta
settings-limit-parameter = Parámetro (por ejemplo chlorine, ph)
settings-limit-unit = Unidad
settings-limit-source = Fuente (permiso, norma)
settings-save-limit = Guardar límite
settings-default-limits = Valores reglamentarios que rigen donde el permiso no fija nada
site-strength = Concentración (%)
site-sg = Densidad relativa
site-capacity = Capacidad al 100 %
site-limit-min = Mínimo
site-limit-max = Máximo
site-basis-weight = en peso
site-basis-trade = comercial (g/L de Cl₂ ÷ 10)
site-basis-available-chlorine = como cloro disponible
site-basis-as-al2o3 = como Al₂O₃
site-basis-purity = pureza
site-pump-peristaltic = bomba peristáltica
site-pump-dry = dosificador en seco
site-pump-gas = dosificador de gas
site-saved = Guardado en el perfil del sitio.
site-invalid = No se guardó: { $detail }
site-number-problem = { $field }: { $problem }
site-number-missing = Falta { $field }.
site-need-name = Escriba primero un nombre.
site-tap-exists = Este sitio ya tiene una toma con ese nombre.
site-pick-product = Elija primero un producto.
site-pick-basis = Elija cómo se expresa la concentración.
site-product-in-use = No se quitó: { $pump } todavía dosifica este producto. Quite o cambie antes la bomba.
site-pump-needs-liquid = Una bomba dosificadora impulsa un líquido: elija un producto líquido.
site-pump-not-metering = Ese nombre es de una bomba peristáltica o un dosificador; aquí solo se editan bombas dosificadoras. Elija otro nombre.
site-need-parameter = Indique el parámetro al que se refiere el límite.
site-limit-empty = Indique un mínimo, un máximo o ambos.
site-limit-reversed = El mínimo es mayor que el máximo.
site-need-source = Indique de dónde sale el límite (permiso, norma).
caution-site-limit-above = { $field } { $value } supera el límite de este sitio de { $limit } { $unit } ({ $source }).
caution-site-limit-below = { $field } { $value } está por debajo del mínimo de este sitio de { $limit } { $unit } ({ $source }).

## Acerca de
about-advisory = Molefeed resuelve la química a partir de sus mediciones. Sus resultados son orientación, no instrucciones: un operador con licencia decide cada dosificación, según el permiso de la planta y la normativa local.
about-sources = Fuentes de datos
about-sources-weights = Masas atómicas: masas atómicas estándar de la IUPAC, incluidas en la app.
about-sources-engine = Constantes de equilibrio y datos de productos: indicados en los pasos de cada cálculo.
about-licenses = Licencias
about-license-app = Molefeed: MIT o Apache-2.0.
about-license-font = Fuente DejaVu Sans: licencia Bitstream Vera (cambios de DejaVu en dominio público).
about-license-slint = Interfaz creada con Slint, usada bajo la licencia Slint Royalty-free Desktop, Mobile, and Web Applications 2.0.

## Productos (claves de nombre del catálogo del motor)
product-chlorine-gas = Cloro gas
product-sodium-hypochlorite = Hipoclorito de sodio
product-calcium-hypochlorite = Hipoclorito de calcio
product-alum-liquid = Alumbre líquido
product-alum-dry = Alumbre seco
product-ferric-chloride = Cloruro férrico
product-ferric-sulfate = Sulfato férrico
product-pacl = Policloruro de aluminio (PAC)
product-sodium-hydroxide = Hidróxido de sodio (sosa cáustica)
product-hydrated-lime = Cal hidratada
product-quicklime = Cal viva
product-soda-ash = Carbonato de sodio
product-sulfur-dioxide = Dióxido de azufre
product-sodium-bisulfite = Bisulfito de sodio
product-sodium-metabisulfite = Metabisulfito de sodio
product-sodium-sulfite = Sulfito de sodio
product-sodium-thiosulfate = Tiosulfato de sodio
product-ascorbic-acid = Ácido ascórbico
product-aqua-ammonia = Amoníaco acuoso
product-ammonium-sulfate = Sulfato de amonio
product-sulfuric-acid = Ácido sulfúrico
product-hydrochloric-acid = Ácido clorhídrico

## Precauciones del motor (claves tal como las emite el motor)
hazard-toxic-gas = Gas tóxico. Trabaje solo con detección de fugas, ventilación y una segunda persona presente.
hazard-toxic-vapour = Desprende vapor tóxico e irritante. Mantenga los envases cerrados y ventile.
hazard-corrosive = Corrosivo para la piel, los ojos y los metales.
hazard-corrosive-mild = Ácido e irritante para la piel y los ojos.
hazard-corrosive-acid = Ácido fuerte: quemaduras graves en piel y ojos.
hazard-corrosive-caustic = Álcali fuerte: quemaduras graves en piel y ojos; el daño ocular es rápido.
hazard-oxidizer = Oxidante fuerte: manténgalo lejos de combustibles, materia orgánica y reductores.
hazard-irritant = Irrita la piel, los ojos y las vías respiratorias.
hazard-irritant-dust = El polvo irrita los ojos y las vías respiratorias.
hazard-stains = Mancha el hormigón, la ropa y los equipos.
hazard-heat-on-dilution = Libera calor al diluirse; puede hervir y salpicar.
hazard-heat-on-slaking = Libera calor al contacto con el agua (apagado).
hazard-releases-so2-with-acid = Libera dióxido de azufre en contacto con ácidos.
ppe-scba-gas = Equipo de respiración autónomo disponible para atender fugas.
ppe-face-shield-gloves = Use careta, gafas, guantes químicos y delantal.
ppe-dust-mask-goggles = Use mascarilla contra polvo, gafas y guantes al manipularlo.
incompatible-acid-hypochlorite-chlorine-gas = Nunca mezcle ácidos con hipoclorito: se libera cloro gas.
incompatible-ammonia-chloramine-gas = Nunca mezcle amoníaco con cloro o con hipoclorito concentrado: gases de cloramina tóxicos.
incompatible-organics-oxidizer = Manténgalo lejos de materia orgánica y combustibles: riesgo de incendio.
incompatible-alkali-heat = Reacciona con los álcalis liberando calor.
incompatible-acid-caustic-heat = Ácidos y álcalis reaccionan violentamente liberando calor.
incompatible-water-into-concentrate = Nunca añada agua al concentrado: añada siempre el producto lentamente al agua.
incompatible-water-quicklime-heat = La cal viva y el agua generan calor intenso: apáguela solo en el apagador.
incompatible-oxidizer-reducer = Agente reductor: manténgalo lejos del cloro, el hipoclorito y otros oxidantes.
incompatible-acid-releases-so2 = Los ácidos liberan dióxido de azufre de este producto.
incompatible-alkali-releases-ammonia = Los álcalis liberan amoníaco de este producto.
pump-over-capacity = La dosificación necesita el { $percent } % de la capacidad de la bomba: supera su capacidad.
pump-above-usable-range = El ajuste de { $percent } % está por encima del rango útil (máx. { $max } %).
pump-below-usable-range = El ajuste de { $percent } % está por debajo del rango útil (mín. { $min } %): la precisión se resiente; considere una bomba menor o una solución más diluida.
setting-fraction-of-percent = El ajuste es una fracción de un por ciento ({ $percent } %): la bomba no puede dosificarlo con precisión.
dose-above-max-use-level = La dosis de producto de { $product_mg_l } mg/L supera su nivel máximo de uso ({ $max_use_level_mg_l } mg/L).
strength-unusual = La concentración { $strength } % ({ $basis }) se aleja mucho del valor habitual { $typical } %: revise el certificado y la base.
sg-from-density-table = No se indicó la gravedad específica: se toma { $sg } de la tabla de densidad del producto a { $temperature_c } °C.
add-chemical-to-water = Llene primero el agua y luego añada el producto lentamente.
zero-dose = La dosis calculada es cero.
pump-check-within-tolerance = La dosificación medida está dentro de la tolerancia: no hace falta cambiarla.
pump-check-adjust = La dosis medida se desvía un { $deviation_percent } % del objetivo: multiplique el ajuste de la bomba por { $factor }.
pump-check-inspect = La dosis medida se desvía un { $deviation_percent } % del objetivo: revise la bomba, las líneas y las válvulas antes de ajustar.
breakpoint-practice-range = En la práctica, el punto de quiebre requiere de { $low }:1 a { $high }:1 Cl₂:N-NH₃.
residual-above-limit = El residual objetivo de { $residual_mg_l } mg/L supera el límite de { $limit_mg_l } mg/L.
ph-alkalinity-effect-from-water-engine = El efecto sobre el pH y la alcalinidad lo calcula el módulo de química del agua.

settings-initials = Iniciales del operador
log-need-initials = Primero escriba sus iniciales en Ajustes: cada dosis registrada guarda quién la fijó.
log-error-not-saved = No guardado: { $detail }. La entrada se conserva en este dispositivo y se vuelve a guardar con la siguiente.
log-error-locked = El registro de dosis está abierto en otra copia de la aplicación: { $detail }
log-error-invalid-entry = Esta entrada no se puede registrar: { $detail }
