//! Embedding gapwise natively from a power stage to its isolation barrier: a flyback design,
//! the primary–secondary working voltage read from it, and what reinforced insulation across
//! that barrier needs, every value with the rule and table row that set it.
//!
//! The member is our own demo (a 12 V / 1.25 A auxiliary supply for a fictional greenhouse
//! controller, installed up to 3000 m). Run with `cargo run --example native_isolation`.

use gapwise::flyback::{flyback_design, FlybackSpec, OutputWinding};
use gapwise::report::Record;
use gapwise::safety::{
    barrier_requirements, flyback_design_working_voltage, Barrier, BarrierSpec, FieldCase,
    InsulationGrade, MaterialGroup, OvervoltageCategory, PollutionDegree,
};
use gapwise::units::uom_si::{electric_current::ampere, electric_potential::volt, length::meter};
use gapwise::units::{ElectricCurrent, ElectricPotential, Length, Quantity};

fn main() -> Result<(), gapwise::Error> {
    println!("{}\n", gapwise::SAFETY_CAUTION);

    let mut output = OutputWinding::new(
        ElectricPotential::new::<volt>(12.0),
        ElectricCurrent::new::<ampere>(1.25),
    );
    output.rectifier_drop = ElectricPotential::new::<volt>(0.6);
    let design = flyback_design(&FlybackSpec::universal(output))?;

    let working = flyback_design_working_voltage(&design)?;
    println!(
        "barrier working voltage  {} peak, {} RMS at {}",
        Quantity::from_typed(working.working_voltage_peak),
        Quantity::from_typed(working.working_voltage_rms),
        Quantity::from_typed(working.working_frequency)
    );

    let need = barrier_requirements(&BarrierSpec {
        barrier: Barrier::PrimarySecondary,
        grade: InsulationGrade::Reinforced,
        mains_voltage: ElectricPotential::new::<volt>(230.0),
        overvoltage_category: OvervoltageCategory::II,
        pollution_degree: PollutionDegree::Two,
        material_group: MaterialGroup::IIIb,
        altitude: Length::new::<meter>(3000.0),
        field: FieldCase::Inhomogeneous,
        working_voltage_peak: working.working_voltage_peak,
        working_voltage_rms: working.working_voltage_rms,
        working_frequency: working.working_frequency,
        impulse_voltage: None,
    })?;
    for field in need.fields() {
        println!("{:34} {}", field.name, field.value);
    }
    Ok(())
}
