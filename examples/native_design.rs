//! Embedding gapwise natively: typed `uom` quantities in, typed results out, no scripting.
//!
//! Run with `cargo run --example native_design`.

use gapwise::magnetics::{awg_diameter, skin_depth};
use gapwise::passives::{lc_resonant_frequency, resistor_divider, DividerSpec, ESeries};
use gapwise::report::Record;
use gapwise::units::uom_si::{
    capacitance::microfarad, electric_current::microampere, electric_potential::volt,
    frequency::kilohertz, inductance::microhenry, thermodynamic_temperature::degree_celsius,
};
use gapwise::units::{
    Capacitance, ElectricCurrent, ElectricPotential, Frequency, Inductance, Quantity,
    ThermodynamicTemperature,
};

fn main() -> Result<(), gapwise::Error> {
    println!("{}\n", gapwise::SAFETY_CAUTION);

    // Feedback divider for a 12 V rail sensed by a 2.5 V programmable shunt reference.
    let divider = resistor_divider(&DividerSpec {
        output_voltage: ElectricPotential::new::<volt>(12.0),
        reference_voltage: ElectricPotential::new::<volt>(2.5),
        divider_current: ElectricCurrent::new::<microampere>(250.0),
        reference_input_current: ElectricCurrent::new::<microampere>(2.0),
        series: ESeries::E96,
    })?;
    for field in divider.fields() {
        println!("{:24} {}", field.name, field.value);
    }

    // Post-filter corner and the copper skin depth at the switching frequency, hot.
    let corner = lc_resonant_frequency(
        Inductance::new::<microhenry>(1.0),
        Capacitance::new::<microfarad>(100.0),
    )?;
    let hot = ThermodynamicTemperature::new::<degree_celsius>(100.0);
    let delta = skin_depth(Frequency::new::<kilohertz>(65.0), hot)?;
    println!(
        "\npost-filter corner       {}",
        Quantity::from_typed(corner)
    );
    println!("skin depth at 65 kHz     {}", Quantity::from_typed(delta));
    println!(
        "AWG 26 bare diameter     {}",
        Quantity::from_typed(awg_diameter(26)?)
    );
    Ok(())
}
