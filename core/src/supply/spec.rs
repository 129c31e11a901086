//! The whole supply's specification: one structure read from a Rhai map, a TOML file or a JSON
//! file with the same names. Each section's keys, kinds, defaults and help text come from one
//! definition ([`SpecKey`] lists generated with the struct), so the script help, the
//! deserialiser and the documentation cannot drift apart.

use crate::error::{Error, Result};
use crate::units::{
    parse_quantity, Capacitance, Decibel, Dimension, ElectricCurrent, ElectricCurrentDensity,
    ElectricPotential, ElectricalResistance, Frequency, Inductance, Length, MagneticFluxDensity,
    Quantity, TemperatureInterval, ThermodynamicTemperature, Time, TypedQuantity,
};
use serde::Deserialize;
use serde_json::{Map, Value as Json};

/// How a key is written in a specification.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum KeyKind {
    /// A quantity with a unit of this dimension, written as text (`"90 V"`), a Rhai quantity,
    /// or the `{value, dimension}` object of gapwise's JSON (value in coherent SI).
    Quantity(&'static str),
    /// A decibel ratio written as text (`"6 dB"`) or a Rhai dB value.
    Decibel,
    /// A plain number.
    Number,
    /// A whole number from 0 up.
    Integer,
    /// Text.
    Text,
    /// true or false.
    Flag,
    /// A table of rule id → limit (a quantity or a plain number).
    RuleLimits,
}

impl KeyKind {
    /// The kind in words, with the unit of a quantity.
    pub fn describe(self) -> String {
        match self {
            KeyKind::Quantity(u) => format!("quantity in {u}"),
            KeyKind::Decibel => "dB".into(),
            KeyKind::Number => "number".into(),
            KeyKind::Integer => "whole number".into(),
            KeyKind::Text => "text".into(),
            KeyKind::Flag => "true or false".into(),
            KeyKind::RuleLimits => "table of rule id → limit".into(),
        }
    }
}

/// Whether a key must be given, may be left out, or has a default.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum KeyDefault {
    /// It must be given.
    Required,
    /// It may be left out (the part then derives or skips it, as its help says).
    Optional,
    /// Its default, written as a user would write it.
    Value(&'static str),
}

/// One key of a specification section: its name, kind, default and help text.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct SpecKey {
    /// Key name (snake_case, the same in Rhai, TOML and JSON).
    pub name: &'static str,
    /// How it is written.
    pub kind: KeyKind,
    /// Required, optional or defaulted.
    pub default: KeyDefault,
    /// What it is (also the struct field's doc).
    pub help: &'static str,
}

/// A value a specification key can hold.
pub trait SpecField: Sized {
    /// Reads a given value; `key` is `section.name` for messages.
    fn read(v: &Json, key: &str) -> Result<Self>;
    /// The value when the key is absent and optional (only `Option` has one).
    fn absent(key: &str) -> Result<Self> {
        Err(Error::missing(format!("missing key `{key}`")))
    }
    /// The value as a report writes it (with its unit).
    fn show(&self) -> String;
    /// Reads a documented default.
    fn read_default(text: &str, key: &str) -> Result<Self> {
        Self::read(&Json::String(text.to_string()), key)
            .or_else(|_| match text.parse::<f64>() {
                Ok(x) => Self::read(&serde_json::json!(x), key),
                Err(_) => Self::read(&Json::Bool(text == "true"), key),
            })
            .map_err(|e| e.context(&format!("default of `{key}` (a gapwise bug)")))
    }
}

fn quantity_from_json(v: &Json, key: &str, expected: Option<Dimension>) -> Result<Quantity> {
    match v {
        Json::String(s) => parse_quantity(s, expected).map_err(|e| e.context(key)),
        Json::Object(m) => {
            let value = m.get("value").and_then(Json::as_f64).ok_or_else(|| {
                Error::invalid(format!(
                    "`{key}`: an object quantity needs a number `value` (coherent SI)"
                ))
            })?;
            let dim: Dimension = match m.get("dimension") {
                Some(d) => serde_json::from_value(d.clone()).map_err(|e| {
                    Error::invalid(format!(
                        "`{key}`: bad `dimension` of an object quantity: {e}"
                    ))
                })?,
                None => Dimension::NONE,
            };
            let absolute = m
                .get("absolute_temperature")
                .and_then(Json::as_bool)
                .unwrap_or(false);
            Ok(Quantity::new(value, dim).with_absolute_temperature(absolute))
        }
        Json::Number(n) => Ok(Quantity::number(n.as_f64().unwrap_or(f64::NAN))),
        other => Err(Error::invalid(format!(
            "`{key}` must be a quantity written with its unit, e.g. \"4.7 uF\", got {other}"
        ))),
    }
}

impl<T: TypedQuantity> SpecField for T {
    fn read(v: &Json, key: &str) -> Result<Self> {
        let q = quantity_from_json(v, key, Some(T::dimension()))?;
        if q.is_dimensionless() && !T::dimension().is_dimensionless() {
            return Err(Error::dimension(format!(
                "`{key}` must be a {} ({}), got the plain number {}; write it with its unit, e.g. \"{} {}\"",
                T::dimension(),
                crate::units::unit_symbol(T::dimension()),
                q,
                q,
                crate::units::unit_symbol(T::dimension())
            )));
        }
        if !q.value().is_finite() {
            return Err(Error::invalid(format!("`{key}` must be finite, got {q}")));
        }
        q.to_typed(key)
    }
    fn show(&self) -> String {
        Quantity::from_typed(*self).to_string()
    }
}

impl SpecField for f64 {
    fn read(v: &Json, key: &str) -> Result<Self> {
        let x = match v {
            Json::Number(n) => n.as_f64(),
            Json::Object(_) | Json::String(_) => {
                let q = quantity_from_json(v, key, Some(Dimension::NONE))?;
                if !q.is_dimensionless() {
                    return Err(Error::dimension(format!(
                        "`{key}` must be a plain number, got {}",
                        q.describe()
                    )));
                }
                Some(q.value())
            }
            _ => None,
        };
        match x {
            Some(x) if x.is_finite() => Ok(x),
            _ => Err(Error::invalid(format!(
                "`{key}` must be a finite plain number, got {v}"
            ))),
        }
    }
    fn show(&self) -> String {
        crate::units::format_number(*self)
    }
}

impl SpecField for u32 {
    fn read(v: &Json, key: &str) -> Result<Self> {
        let n = match v {
            Json::Number(n) => n.as_u64().or_else(|| {
                n.as_f64()
                    .filter(|x| x.fract() == 0.0 && *x >= 0.0)
                    .map(|x| x as u64)
            }),
            Json::String(s) => s.trim().parse::<u64>().ok(),
            _ => None,
        };
        n.and_then(|n| u32::try_from(n).ok()).ok_or_else(|| {
            Error::invalid(format!("`{key}` must be a whole number from 0 up, got {v}"))
        })
    }
    fn show(&self) -> String {
        self.to_string()
    }
}

impl SpecField for bool {
    fn read(v: &Json, key: &str) -> Result<Self> {
        v.as_bool()
            .ok_or_else(|| Error::invalid(format!("`{key}` must be true or false, got {v}")))
    }
    fn show(&self) -> String {
        self.to_string()
    }
}

impl SpecField for String {
    fn read(v: &Json, key: &str) -> Result<Self> {
        v.as_str()
            .map(str::to_string)
            .ok_or_else(|| Error::invalid(format!("`{key}` must be text, got {v}")))
    }
    fn show(&self) -> String {
        self.clone()
    }
}

impl SpecField for Decibel {
    fn read(v: &Json, key: &str) -> Result<Self> {
        let text = v.as_str().unwrap_or_default().trim();
        let number = text
            .strip_suffix("dB")
            .map(str::trim)
            .and_then(|t| t.parse::<f64>().ok())
            .filter(|x| x.is_finite());
        number.map(Decibel::ratio).ok_or_else(|| {
            Error::invalid(format!(
                "`{key}` must be a ratio in decibels written with its unit, e.g. \"6 dB\", got {v}"
            ))
        })
    }
    fn show(&self) -> String {
        self.to_string()
    }
}

/// Rule limits overridden by rule id, in the order given.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct RuleLimits(pub Vec<(String, Quantity)>);

impl SpecField for RuleLimits {
    fn read(v: &Json, key: &str) -> Result<Self> {
        let m = v.as_object().ok_or_else(|| {
            Error::invalid(format!(
                "`{key}` must be a table of rule id → limit, got {v}"
            ))
        })?;
        let mut out = Vec::new();
        for (id, lim) in m {
            let q = quantity_from_json(lim, &format!("{key}.{id}"), None)?;
            if !q.value().is_finite() {
                return Err(Error::invalid(format!("`{key}.{id}` must be finite")));
            }
            out.push((id.clone(), q));
        }
        Ok(RuleLimits(out))
    }
    fn show(&self) -> String {
        let parts: Vec<String> = self.0.iter().map(|(k, v)| format!("{k} = {v}")).collect();
        parts.join("; ")
    }
}

impl<T: SpecField> SpecField for Option<T> {
    fn read(v: &Json, key: &str) -> Result<Self> {
        if v.is_null() {
            return Ok(None);
        }
        T::read(v, key).map(Some)
    }
    fn absent(_key: &str) -> Result<Self> {
        Ok(None)
    }
    fn show(&self) -> String {
        self.as_ref().map_or_else(|| "—".to_string(), T::show)
    }
}

/// Checks the keys of a section against its documented keys (an unknown key names the
/// nearest valid one).
pub fn check_keys(section: &str, keys: &[SpecKey], m: &Map<String, Json>) -> Result<()> {
    for k in m.keys() {
        if !keys.iter().any(|d| d.name == k) {
            let names: Vec<&str> = keys.iter().map(|d| d.name).collect();
            let near = nearest(k, &names)
                .map(|n| format!("; did you mean `{n}`?"))
                .unwrap_or_default();
            return Err(Error::unknown(format!(
                "supply_design: unknown key `{section}.{k}`{near}"
            )));
        }
    }
    Ok(())
}

fn nearest<'a>(word: &str, names: &[&'a str]) -> Option<&'a str> {
    fn distance(a: &str, b: &str) -> usize {
        let b: Vec<char> = b.chars().collect();
        let mut row: Vec<usize> = (0..=b.len()).collect();
        for (i, ca) in a.chars().enumerate() {
            let mut prev = row[0];
            row[0] = i + 1;
            for j in 0..b.len() {
                let cur = row[j + 1];
                row[j + 1] = (prev + usize::from(ca != b[j]))
                    .min(row[j] + 1)
                    .min(cur + 1);
                prev = cur;
            }
        }
        row[b.len()]
    }
    names
        .iter()
        .map(|n| (distance(word, n), *n))
        .filter(|(d, n)| *d <= 3.max(n.len() / 3))
        .min_by_key(|(d, _)| *d)
        .map(|(_, n)| n)
}

/// Reads one key: given, defaulted, optional or missing.
pub fn read_key<T: SpecField>(section: &str, key: &SpecKey, m: &Map<String, Json>) -> Result<T> {
    let full = format!("{section}.{}", key.name);
    match m.get(key.name) {
        Some(v) if !v.is_null() => T::read(v, &full),
        _ => match key.default {
            KeyDefault::Value(text) => T::read_default(text, &full),
            KeyDefault::Optional => T::absent(&full),
            KeyDefault::Required => Err(Error::missing(format!(
                "supply_design: missing key `{full}` ({}, {})",
                key.help,
                key.kind.describe()
            ))),
        },
    }
}

/// Defines a specification section: the struct (each field documented by its help text),
/// its `KEYS` (name, kind, default, help) and its reader; the one definition of the keys.
macro_rules! spec_section {
    (
        $(#[doc = $sdoc:literal])*
        $name:ident = $section:literal {
            $(
                #[doc = $help:literal]
                $field:ident : $ty:ty => $kind:expr, $default:expr;
            )*
        }
    ) => {
        $(#[doc = $sdoc])*
        #[derive(Clone, Debug, PartialEq)]
        pub struct $name {
            $(
                #[doc = $help]
                pub $field: $ty,
            )*
        }

        impl $name {
            /// The section's name in the specification.
            pub const SECTION: &'static str = $section;
            /// Every key of the section with its kind, default and help.
            pub const KEYS: &'static [SpecKey] = &[
                $(SpecKey { name: stringify!($field), kind: $kind, default: $default, help: $help.trim_ascii() },)*
            ];
            /// Every key with its value as a report writes it, in the order of `KEYS`.
            pub fn values(&self) -> Vec<(&'static str, String)> {
                vec![$((stringify!($field), SpecField::show(&self.$field)),)*]
            }
            /// Reads the section from a map (absent keys take their defaults).
            pub fn from_map(m: &Map<String, Json>) -> Result<Self> {
                check_keys($section, Self::KEYS, m)?;
                let mut keys = Self::KEYS.iter();
                Ok(Self {
                    $(
                        $field: read_key::<$ty>($section, keys.next().ok_or_else(|| Error::invalid("spec key list out of step (a gapwise bug)"))?, m)?,
                    )*
                })
            }
        }

        impl<'de> Deserialize<'de> for $name {
            fn deserialize<D: serde::Deserializer<'de>>(d: D) -> std::result::Result<Self, D::Error> {
                let m = Map::<String, Json>::deserialize(d)?;
                Self::from_map(&m).map_err(serde::de::Error::custom)
            }
        }
    };
}

use KeyDefault::{Optional, Required, Value as Default};
use KeyKind::{Flag, Integer, Number, Quantity as Q, Text};

spec_section! {
    /// The input and power stage (the keys of `flyback_design` that a supply sets most often;
    /// the rest keep `FlybackSpec::universal`'s values).
    PowerStageSection = "power_stage" {
        /// lowest line voltage, RMS
        min_line_voltage: ElectricPotential => Q("V"), Default("90 V");
        /// highest line voltage, RMS
        max_line_voltage: ElectricPotential => Q("V"), Default("264 V");
        /// lowest line frequency
        line_frequency: Frequency => Q("Hz"), Default("50 Hz");
        /// bulk capacitance; else sized for target_valley_voltage
        bulk_capacitance: Option<Capacitance> => Q("F"), Optional;
        /// bulk valley at low line, full load when sizing the bulk capacitor; else 0.64 × the lowest rectified line peak
        target_valley_voltage: Option<ElectricPotential> => Q("V"), Optional;
        /// bulk capacitor ESR at the switching frequency (losses and the EMI source)
        bulk_esr: ElectricalResistance => Q("Ω"), Default("1 ohm");
        /// bulk capacitor ripple current rating (adds its rule)
        bulk_ripple_current_rating: Option<ElectricCurrent> => Q("A"), Optional;
        /// regulated output voltage
        output_voltage: ElectricPotential => Q("V"), Required;
        /// full-load output current
        output_current: ElectricCurrent => Q("A"), Required;
        /// output rectifier forward drop
        rectifier_drop: ElectricPotential => Q("V"), Default("0.5 V");
        /// output rectifier reverse rating (adds its rule)
        rectifier_voltage_rating: Option<ElectricPotential> => Q("V"), Optional;
        /// output capacitance
        output_capacitance: Capacitance => Q("F"), Default("1000 uF");
        /// output capacitor ESR
        output_esr: ElectricalResistance => Q("Ω"), Default("30 mohm");
        /// output capacitor ripple current rating (adds its rule)
        output_ripple_current_rating: Option<ElectricCurrent> => Q("A"), Optional;
        /// LC post filter inductance (with post_filter_capacitance)
        post_filter_inductance: Option<Inductance> => Q("H"), Optional;
        /// LC post filter capacitance
        post_filter_capacitance: Option<Capacitance> => Q("F"), Optional;
        /// controller supply winding voltage (none when absent)
        bias_voltage: Option<ElectricPotential> => Q("V"), Optional;
        /// controller supply current
        bias_current: ElectricCurrent => Q("A"), Default("5 mA");
        /// bias rectifier drop
        bias_rectifier_drop: ElectricPotential => Q("V"), Default("0.7 V");
        /// fixed switching frequency
        switching_frequency: Frequency => Q("Hz"), Default("65 kHz");
        /// nominal peak current limit; else 10 % above the low-line full-load peak at its low tolerance
        current_limit: Option<ElectricCurrent> => Q("A"), Optional;
        /// relative tolerance of the current limit
        current_limit_tolerance: f64 => Number, Default("0.1");
        /// controller's largest duty cycle
        max_duty_cycle: f64 => Number, Default("0.7");
        /// inductance target at low line, full load: "ccm", "dcm" or "boundary"
        mode: String => Text, Default("ccm");
        /// CCM: ΔI / I_mid at low line, full load (0.05 … 1.99)
        ripple_ratio: f64 => Number, Default("0.8");
        /// DCM: relative margin below the boundary inductance
        dcm_margin: f64 => Number, Default("0.1");
        /// reflected voltage of the regulated output, n·(V_out + V_rectifier)
        reflected_voltage: ElectricPotential => Q("V"), Default("100 V");
        /// switch drain-source rating
        switch_voltage_rating: ElectricPotential => Q("V"), Default("650 V");
        /// switch on-resistance at 25 °C
        switch_on_resistance: ElectricalResistance => Q("Ω"), Default("1.5 ohm");
        /// "rcd" or "zener"
        clamp: String => Text, Default("rcd");
        /// clamp overshoot above the reflected voltage at the worst case; else derived (0.5 × reflected_voltage, or what the drain limit leaves)
        clamp_voltage_above_reflected: Option<ElectricPotential> => Q("V"), Optional;
        /// starting leakage inductance as a fraction of the primary; replaced by the transformer's computed leakage
        leakage_fraction: f64 => Number, Default("0.02");
        /// starting efficiency estimate of the loss model
        efficiency: f64 => Number, Default("0.85");
        /// starting transformer loss as a fraction of output power; replaced by the transformer's computed copper and core loss
        transformer_loss_fraction: f64 => Number, Default("0.02");
        /// air around the switch and rectifiers
        ambient_temperature: ThermodynamicTemperature => Q("°C"), Default("50 °C");
        /// rule id → limit overriding the power stage's rule book (as flyback_design's rule_limits)
        rule_limits: Option<RuleLimits> => KeyKind::RuleLimits, Optional;
    }
}

spec_section! {
    /// The transformer (the keys of `transformer_design` that are not the operating point;
    /// the operating point comes from the power stage).
    TransformerSection = "transformer" {
        /// core size name, e.g. "EE25" (see cores())
        core: String => Text, Required;
        /// ferrite material class name (see ferrite_materials())
        material: String => Text, Default("mnzn_power_100khz");
        /// relative tolerance of the primary inductance
        inductance_tolerance: f64 => Number, Default("0.1");
        /// peak flux density allowed at the worst-case current limit, hot
        max_flux_density: MagneticFluxDensity => Q("T"), Default("0.3 T");
        /// required margin below Bsat at 100 °C
        saturation_margin: f64 => Number, Default("0.1");
        /// core temperature for loss
        core_temperature: ThermodynamicTemperature => Q("°C"), Default("100 °C");
        /// copper temperature
        winding_temperature: ThermodynamicTemperature => Q("°C"), Default("100 °C");
        /// air around the transformer
        ambient_temperature: ThermodynamicTemperature => Q("°C"), Default("40 °C");
        /// "spacer" or "centre_leg"
        gap_placement: String => Text, Default("spacer");
        /// "metric" or "awg"
        wire_system: String => Text, Default("metric");
        /// enamel grade 1 … 3
        enamel_grade: u32 => Integer, Default("2");
        /// triple-insulated secondary (no margin tape)
        secondary_triple_insulated: bool => Flag, Default("false");
        /// litz primary
        primary_litz: bool => Flag, Default("false");
        /// litz secondary
        secondary_litz: bool => Flag, Default("false");
        /// strand diameter of litz windings
        litz_strand_diameter: Length => Q("m"), Default("0.1 mm");
        /// house limit: current density
        max_current_density: ElectricCurrentDensity => Q("A/m²"), Default("6 A/mm2");
        /// house limit: copper over window
        max_window_fill: f64 => Number, Default("0.35");
        /// house limit: temperature rise
        max_temperature_rise: TemperatureInterval => Q("K"), Default("40 K");
        /// house limit: layers per winding section
        max_layers: u32 => Integer, Default("3");
        /// tape layers primary to secondary (from the safety analysis)
        insulation_layers: u32 => Integer, Default("3");
        /// tape layers between same-side windings
        functional_tape_layers: u32 => Integer, Default("1");
        /// one tape layer
        tape_thickness: Length => Q("m"), Default("0.05 mm");
        /// margin tape each side (half the creepage)
        margin_width: Length => Q("m"), Default("2.5 mm");
        /// creepage along the bobbin to check the margins against
        required_creepage: Option<Length> => Q("m"), Optional;
        /// "split_primary" or "primary_secondary_bias"
        winding_order: String => Text, Default("split_primary");
        /// insulation thermal class A, E, B, F or H
        insulation_class: String => Text, Default("B");
    }
}

spec_section! {
    /// Regulation and loop (the keys of `flyback_regulation` a supply sets most often; the
    /// rest keep `RegulationSpec::default`).
    RegulationSection = "regulation" {
        /// lowest optocoupler CTR (after ageing, at temperature)
        ctr_min: f64 => Number, Default("0.5");
        /// highest optocoupler CTR
        ctr_max: f64 => Number, Default("2");
        /// current in the lower divider resistor
        divider_current: ElectricCurrent => Q("A"), Default("250 uA");
        /// relative tolerance of the divider resistors
        resistor_tolerance: f64 => Number, Default("0.01");
        /// crossover target at ctr_max on the design corner; else 15 % of the lowest RHP zero, at most 5 % of f_s
        crossover_frequency: Option<Frequency> => Q("Hz"), Optional;
        /// target phase margin, degrees (20 … 85)
        phase_margin: f64 => Number, Default("60");
        /// slope compensation as a fraction of the primary off-slope
        ramp_fraction: f64 => Number, Default("0.5");
        /// rule id → limit overriding the regulation rule book
        rule_limits: Option<RuleLimits> => KeyKind::RuleLimits, Optional;
    }
}

spec_section! {
    /// The EMI input filter (the filter keys of `input_filter_design`; the converter keys come
    /// from the power stage at both line corners, full load).
    EmiFilterSection = "emi_filter" {
        /// bulk capacitor ESL with its leads
        bulk_esl: Inductance => Q("H"), Default("20 nH");
        /// drain node to earth (switch tab, transformer)
        parasitic_capacitance: Capacitance => Q("F"), Default("15 pF");
        /// drain rise and fall time
        rise_time: Time => Q("s"), Default("30 ns");
        /// CISPR 32 class, "A" or "B"
        class: String => Text, Default("B");
        /// margin under the limit, 0 … 40 dB
        margin: Decibel => KeyKind::Decibel, Default("6 dB");
        /// DM LC stages, 1 or 2
        stages: u32 => Integer, Default("1");
        /// X capacitance of each DM stage
        x_capacitance: Capacitance => Q("F"), Default("220 nF");
        /// series resistance of each DM inductor
        inductor_resistance: ElectricalResistance => Q("Ω"), Default("0.2 ohm");
        /// largest total Y capacitance; else from touch_current_limit at the highest line and line_frequency
        max_y_capacitance: Option<Capacitance> => Q("F"), Optional;
        /// touch current limit that bounds the Y capacitance (common practice for class II, no published source)
        touch_current_limit: ElectricCurrent => Q("A"), Default("0.25 mA");
        /// margin of |R_N| over the filter output impedance
        middlebrook_margin: Decibel => KeyKind::Decibel, Default("6 dB");
        /// line frequency for the touch current (60 Hz is the worst of 50/60 Hz)
        line_frequency: Frequency => Q("Hz"), Default("60 Hz");
        /// time allowed to discharge the X capacitors (value recalled from memory)
        discharge_time: Time => Q("s"), Default("2 s");
        /// voltage to reach within that time (value recalled from memory)
        discharge_voltage: ElectricPotential => Q("V"), Default("60 V");
    }
}

spec_section! {
    /// The primary–secondary isolation barrier: the site, the grade and what the layout
    /// provides; the working voltage comes from the power stage.
    IsolationSection = "isolation" {
        /// nominal line-to-neutral mains voltage, RMS
        mains_voltage: ElectricPotential => Q("V"), Default("230 V");
        /// overvoltage category "I" … "IV"
        overvoltage_category: String => Text, Default("II");
        /// pollution degree 1 … 4
        pollution_degree: u32 => Integer, Default("2");
        /// material group "I", "II", "IIIa" or "IIIb"
        material_group: String => Text, Default("IIIb");
        /// altitude of installation
        altitude: Length => Q("m"), Default("2000 m");
        /// "inhomogeneous" or "homogeneous" field for clearances
        field: String => Text, Default("inhomogeneous");
        /// grade across the primary–secondary barrier: "basic", "supplementary", "reinforced" or "double"
        insulation: String => Text, Default("reinforced");
        /// "conservative_sum" or "waveform": which working voltage estimate the barrier uses
        working_voltage_method: String => Text, Default("conservative_sum");
        /// shortest clearance across the barrier as laid out
        provided_clearance: Option<Length> => Q("m"), Optional;
        /// shortest creepage in the product (bobbin, housing)
        provided_creepage: Option<Length> => Q("m"), Optional;
        /// shortest creepage on the printed board
        provided_creepage_printed_board: Option<Length> => Q("m"), Optional;
        /// thickness of solid insulation
        provided_distance_through_insulation: Option<Length> => Q("m"), Optional;
        /// thin-sheet layers used
        provided_thin_sheet_layers: Option<u32> => Integer, Optional;
        /// each thin-sheet layer alone passes the electric strength test
        provided_thin_sheet_each_layer_tested: bool => Flag, Default("false");
    }
}

/// The sections of a [`SupplySpec`] with their keys, in order (for help and documentation).
pub const SUPPLY_SECTIONS: &[(&str, &str, &[SpecKey])] = &[
    (
        "power_stage",
        "input and power stage",
        PowerStageSection::KEYS,
    ),
    (
        "transformer",
        "transformer build and house limits",
        TransformerSection::KEYS,
    ),
    (
        "regulation",
        "output divider, optocoupler and loop",
        RegulationSection::KEYS,
    ),
    ("emi_filter", "EMI input filter", EmiFilterSection::KEYS),
    (
        "isolation",
        "primary–secondary barrier",
        IsolationSection::KEYS,
    ),
];

/// The specification of a whole supply: one section per part. Read it with serde from TOML
/// or JSON (`[power_stage]`, `[transformer]`, … with the keys of [`SUPPLY_SECTIONS`]), or from
/// a Rhai map of maps (`supply_design(#{power_stage: #{…}, …})`). Every section but
/// `power_stage` and `transformer` may be left out (its keys then all take their defaults);
/// an unknown section or key is an error naming the nearest valid one.
#[derive(Clone, Debug, PartialEq, Deserialize)]
#[serde(try_from = "RawSupplySpec")]
pub struct SupplySpec {
    /// Name of the supply (report title).
    pub name: String,
    /// Input and power stage.
    pub power_stage: PowerStageSection,
    /// Transformer build.
    pub transformer: TransformerSection,
    /// Regulation and loop.
    pub regulation: RegulationSection,
    /// EMI input filter.
    pub emi_filter: EmiFilterSection,
    /// Isolation barrier.
    pub isolation: IsolationSection,
    /// The keys the specification gave, as `section.key` (the rest took their defaults).
    pub given_keys: Vec<String>,
}

/// The sections as given, before their keys are read.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSupplySpec {
    #[serde(default = "default_name")]
    name: String,
    power_stage: Option<Map<String, Json>>,
    transformer: Option<Map<String, Json>>,
    #[serde(default)]
    regulation: Map<String, Json>,
    #[serde(default)]
    emi_filter: Map<String, Json>,
    #[serde(default)]
    isolation: Map<String, Json>,
}

fn default_name() -> String {
    "supply".into()
}

impl TryFrom<RawSupplySpec> for SupplySpec {
    type Error = Error;
    fn try_from(r: RawSupplySpec) -> Result<Self> {
        let need = |m: Option<Map<String, Json>>, s: &str| {
            m.ok_or_else(|| Error::missing(format!("supply_design: missing section `{s}`")))
        };
        let mut given_keys = Vec::new();
        for (section, m) in [
            ("power_stage", &r.power_stage),
            ("transformer", &r.transformer),
        ] {
            if let Some(m) = m {
                given_keys.extend(m.keys().map(|k| format!("{section}.{k}")));
            }
        }
        for (section, m) in [
            ("regulation", &r.regulation),
            ("emi_filter", &r.emi_filter),
            ("isolation", &r.isolation),
        ] {
            given_keys.extend(m.keys().map(|k| format!("{section}.{k}")));
        }
        Ok(Self {
            given_keys,
            name: r.name,
            power_stage: PowerStageSection::from_map(&need(r.power_stage, "power_stage")?)?,
            transformer: TransformerSection::from_map(&need(r.transformer, "transformer")?)?,
            regulation: RegulationSection::from_map(&r.regulation)?,
            emi_filter: EmiFilterSection::from_map(&r.emi_filter)?,
            isolation: IsolationSection::from_map(&r.isolation)?,
        })
    }
}

impl SupplySpec {
    /// Every key of every section as (`section.key`, value, given), in the order of
    /// [`SUPPLY_SECTIONS`]: what the report lists as the specification and its defaults.
    pub fn listing(&self) -> Vec<(String, String, bool)> {
        let sections = [
            ("power_stage", self.power_stage.values()),
            ("transformer", self.transformer.values()),
            ("regulation", self.regulation.values()),
            ("emi_filter", self.emi_filter.values()),
            ("isolation", self.isolation.values()),
        ];
        let mut out = Vec::new();
        for (section, values) in sections {
            for (k, v) in values {
                let key = format!("{section}.{k}");
                let given = self.given_keys.contains(&key);
                out.push((key, v, given));
            }
        }
        out
    }

    /// Reads a specification from a JSON value (the Rhai map converted, or a parsed file).
    /// Unknown sections, unknown keys, wrong kinds and missing required keys are errors naming
    /// `section.key` and the unit.
    pub fn from_json(v: Json) -> Result<Self> {
        SupplySpec::deserialize(v).map_err(|e| {
            let text = e.to_string();
            if text.contains("unknown field") {
                Error::unknown(format!("supply_design: {text}"))
            } else {
                Error::invalid(text)
            }
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_default_reads() {
        // every documented default parses to its field's type (the struct and its key list
        // come from one definition; this catches a default written in the wrong unit)
        let spec = SupplySpec::from_json(serde_json::json!({
            "power_stage": {"output_voltage": "12 V", "output_current": "1.25 A"},
            "transformer": {"core": "EE25"},
        }))
        .unwrap();
        assert_eq!(spec.power_stage.min_line_voltage.value, 90.0);
        assert!((spec.power_stage.ambient_temperature.value - 323.15).abs() < 1e-9);
        assert_eq!(spec.emi_filter.margin, Decibel::ratio(6.0));
        assert_eq!(spec.transformer.max_layers, 3);
        assert!(!spec.transformer.primary_litz);
    }

    #[test]
    fn unknown_and_missing_keys_are_named() {
        let e = SupplySpec::from_json(serde_json::json!({
            "power_stage": {"output_voltage": "12 V", "output_curent": "1 A"},
            "transformer": {"core": "EE25"},
        }))
        .unwrap_err()
        .to_string();
        assert!(
            e.contains("power_stage.output_curent") && e.contains("output_current"),
            "{e}"
        );
        let e = SupplySpec::from_json(serde_json::json!({
            "power_stage": {"output_voltage": "12 V"},
            "transformer": {"core": "EE25"},
        }))
        .unwrap_err()
        .to_string();
        assert!(e.contains("power_stage.output_current"), "{e}");
        let e = SupplySpec::from_json(serde_json::json!({
            "power_stage": {"output_voltage": 12, "output_current": "1 A"},
            "transformer": {"core": "EE25"},
        }))
        .unwrap_err()
        .to_string();
        assert!(
            e.contains("power_stage.output_voltage") && e.contains("V"),
            "{e}"
        );
    }
}
