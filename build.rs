//! Build step: turns `data/elements.json` into a static table (so atomic weights are embedded
//! data, not parsed at run time) and, with the `app` feature, compiles the Slint UI.
use std::{env, fs, path::Path};

fn main() {
    println!("cargo:rerun-if-changed=build.rs");
    println!("cargo:rerun-if-changed=data/elements.json");
    generate_element_table();
    #[cfg(feature = "app")]
    app::compile();
}

fn generate_element_table() {
    let text = fs::read_to_string("data/elements.json").expect("data/elements.json is readable");
    let doc: serde_json::Value = serde_json::from_str(&text).expect("data/elements.json is JSON");
    let elements = doc["elements"].as_array().expect("elements is an array");
    let mut table = String::from("pub(crate) static ELEMENTS: [Element; ");
    table.push_str(&format!("{}] = [\n", elements.len()));
    let mut lookup = vec![u8::MAX; 26 * 27];
    for (index, e) in elements.iter().enumerate() {
        let symbol = e["symbol"].as_str().expect("symbol");
        let weight = e["atomic_weight"].as_f64().expect("atomic_weight");
        let basis = match e["basis"].as_str().expect("basis") {
            "standard" => "WeightBasis::Standard",
            "conventional" => "WeightBasis::Conventional",
            "mass-number" => "WeightBasis::MassNumber",
            other => panic!("unknown basis {other}"),
        };
        let weight_text = e["atomic_weight"].to_string();
        let decimals = weight_text.split('.').nth(1).map_or(0, str::len);
        table.push_str(&format!(
            "    Element {{ z: {}, symbol: {:?}, atomic_weight: {:?}, decimals: {}, basis: {} }},\n",
            index + 1,
            symbol,
            weight,
            decimals,
            basis
        ));
        let bytes = symbol.as_bytes();
        let first = (bytes[0] - b'A') as usize;
        let second = bytes.get(1).map_or(0, |b| (b - b'a') as usize + 1);
        lookup[first * 27 + second] = index as u8;
    }
    table.push_str("];\n");
    table.push_str(&format!(
        "pub(crate) static SYMBOL_INDEX: [u8; {}] = {:?};\n",
        lookup.len(),
        lookup
    ));
    let out = Path::new(&env::var("OUT_DIR").expect("OUT_DIR")).join("elements.rs");
    fs::write(out, table).expect("write elements.rs");
}

#[cfg(feature = "app")]
mod app {
    pub fn compile() {
        println!("cargo:rerun-if-changed=ui");
        // Debug info lets UI tests find elements by accessible label. The style is fixed so
        // screenshots and tests look the same on every platform.
        let config = slint_build::CompilerConfiguration::new()
            .with_debug_info(true)
            .with_style("fluent".into());
        slint_build::compile_with_config("ui/app.slint", config)
            .expect("ui/app.slint must compile");
    }
}
