//! Embedding the gapwise engine with a company's own extra function, then running a recipe
//! that uses it next to the built-in calculations.
//!
//! Run with `cargo run --example company_engine`.

use gapwise::script::{EngineLimits, ScriptHost};
use gapwise::units::{Dimension, Quantity};

/// A house rule of our fictional company: the stock capacitor voltage rating to buy for a
/// working voltage, with 25 % headroom, from the ratings kept in stock (invented for the demo).
fn stock_capacitor_rating(working: Quantity) -> Result<Quantity, Box<rhai::EvalAltResult>> {
    if working.dimension() != Dimension::VOLTAGE
        || !working.value().is_finite()
        || working.value() <= 0.0
    {
        return Err(format!("`working_voltage` must be a positive voltage, got {working}").into());
    }
    let needed = working.value() * 1.25;
    [
        6.3, 10.0, 16.0, 25.0, 35.0, 50.0, 63.0, 100.0, 250.0, 400.0, 450.0,
    ]
    .into_iter()
    .find(|r| *r >= needed)
    .map(|r| Quantity::new(r, Dimension::VOLTAGE))
    .ok_or_else(|| format!("no stock rating covers {working} with 25 % headroom").into())
}

fn main() {
    let host = ScriptHost::with_extensions(EngineLimits::default(), |engine| {
        engine.register_fn("stock_capacitor_rating", stock_capacitor_rating);
    });
    let recipe = r#"
        let rows = family(|v| #{
            output_capacitor_rating: stock_capacitor_rating(v),
            post_filter_corner: lc_resonant_frequency(1 * uH, 220 * uF),
        }, [5 * V, 12 * V, 48 * V]);
        print(rows);
        rows
    "#;
    host.set_print(Some(std::sync::Arc::new(|line: &str| println!("{line}"))));
    match host.eval(recipe, "<company recipe>") {
        Ok(_) => println!("{}", gapwise::SAFETY_CAUTION),
        Err(e) => {
            eprintln!("{e}");
            std::process::exit(1);
        }
    }
}
