//! The classifications insulation rules depend on: pollution degree, material group,
//! overvoltage category, field case, insulation grade and the barrier being dimensioned.

use super::tables::{MATERIAL_GROUPS, MATERIAL_GROUP_SOURCE};
use crate::error::{Error, Result};
use crate::units::format_number;
use std::fmt;

/// Pollution degree of the micro-environment (IEC 60664-1:2020 4.5.2): 1 (dry, no pollution),
/// 2 (non-conductive pollution, occasional condensation), 3 (conductive pollution).
/// Degree 4 (persistent conductivity) is outside this library's tables.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum PollutionDegree {
    /// Pollution degree 1.
    One,
    /// Pollution degree 2 (the usual case inside an enclosure).
    Two,
    /// Pollution degree 3.
    Three,
}

impl PollutionDegree {
    /// From 1, 2 or 3; anything else is an error naming the parameter.
    pub fn from_number(n: i64) -> Result<Self> {
        match n {
            1 => Ok(Self::One),
            2 => Ok(Self::Two),
            3 => Ok(Self::Three),
            _ => Err(Error::unknown(format!(
                "`pollution_degree` = {n} is not covered; expected 1, 2 or 3 (IEC 60664-1 4.5.2; degree 4 is not in gapwise's tables)"
            ))),
        }
    }
    /// 1, 2 or 3.
    pub fn number(self) -> i64 {
        match self {
            Self::One => 1,
            Self::Two => 2,
            Self::Three => 3,
        }
    }
    /// 0, 1 or 2, for table columns.
    pub(crate) fn index(self) -> usize {
        self.number() as usize - 1
    }
}

impl fmt::Display for PollutionDegree {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "PD{}", self.number())
    }
}

/// Material group by comparative tracking index (IEC 60664-1:2020 4.8.1.3).
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum MaterialGroup {
    /// CTI ≥ 600.
    I,
    /// 400 ≤ CTI < 600.
    II,
    /// 175 ≤ CTI < 400.
    IIIa,
    /// 100 ≤ CTI < 175 (most glass-epoxy laminates are assumed to be here).
    IIIb,
}

impl MaterialGroup {
    /// Reads `I`, `II`, `IIIa`, `IIIb` (case-insensitive, also `3a`, `3b`).
    pub fn parse(text: &str) -> Result<Self> {
        match text.trim().to_ascii_lowercase().as_str() {
            "i" | "1" => Ok(Self::I),
            "ii" | "2" => Ok(Self::II),
            "iiia" | "3a" => Ok(Self::IIIa),
            "iiib" | "3b" => Ok(Self::IIIb),
            "iii" | "3" => Err(Error::unknown(
                "`material_group` \"III\" is ambiguous; give \"IIIa\" (CTI 175 … 399) or \"IIIb\" (CTI 100 … 174)",
            )),
            other => Err(Error::unknown(format!(
                "unknown `material_group` \"{other}\"; expected \"I\", \"II\", \"IIIa\" or \"IIIb\""
            ))),
        }
    }
    /// The group of a material from its comparative tracking index (IEC 60112 test, volts).
    ///
    /// Rule: I for CTI ≥ 600, II for 400 ≤ CTI < 600, IIIa for 175 ≤ CTI < 400, IIIb for
    /// 100 ≤ CTI < 175 (IEC 60664-1:2020 4.8.1.3, value recalled from memory). A CTI below 100
    /// or not finite is an error.
    pub fn from_cti(cti: f64) -> Result<Self> {
        if !cti.is_finite() {
            return Err(Error::invalid(format!(
                "`cti` (comparative tracking index) must be a finite number of volts, got {}",
                format_number(cti)
            )));
        }
        for (name, at_least) in MATERIAL_GROUPS {
            if cti >= at_least {
                return Self::parse(name);
            }
        }
        Err(Error::out_of_range(format!(
            "`cti` (comparative tracking index) = {} V is below 100 V, the lowest group (IIIb) of {}",
            format_number(cti),
            MATERIAL_GROUP_SOURCE.cite()
        )))
    }
    /// The group's name.
    pub fn as_str(self) -> &'static str {
        match self {
            Self::I => "I",
            Self::II => "II",
            Self::IIIa => "IIIa",
            Self::IIIb => "IIIb",
        }
    }
    /// Column index within a pollution degree (IIIa and IIIb share group III).
    pub(crate) fn column(self) -> usize {
        match self {
            Self::I => 0,
            Self::II => 1,
            Self::IIIa | Self::IIIb => 2,
        }
    }
}

impl fmt::Display for MaterialGroup {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

/// Overvoltage category of the mains connection (IEC 60664-1:2020 4.3.3.2): I … IV. Equipment
/// plugged into a building socket is usually category II.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum OvervoltageCategory {
    /// Category I.
    I,
    /// Category II.
    II,
    /// Category III.
    III,
    /// Category IV.
    IV,
}

impl OvervoltageCategory {
    /// Reads `I` … `IV` (also `1` … `4`).
    pub fn parse(text: &str) -> Result<Self> {
        match text.trim().to_ascii_uppercase().as_str() {
            "I" | "1" => Ok(Self::I),
            "II" | "2" => Ok(Self::II),
            "III" | "3" => Ok(Self::III),
            "IV" | "4" => Ok(Self::IV),
            other => Err(Error::unknown(format!(
                "unknown `overvoltage_category` \"{other}\"; expected \"I\", \"II\", \"III\" or \"IV\""
            ))),
        }
    }
    /// `I` … `IV`.
    pub fn as_str(self) -> &'static str {
        match self {
            Self::I => "I",
            Self::II => "II",
            Self::III => "III",
            Self::IV => "IV",
        }
    }
    pub(crate) fn index(self) -> usize {
        self as usize
    }
    /// The category one lower (category I stays I).
    pub fn one_lower(self) -> Self {
        match self {
            Self::I | Self::II => Self::I,
            Self::III => Self::II,
            Self::IV => Self::III,
        }
    }
}

impl fmt::Display for OvervoltageCategory {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "OVC {}", self.as_str())
    }
}

/// Electric field between the conductors (IEC 60664-1:2020 Table F.2 cases A and B).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum FieldCase {
    /// Case A: inhomogeneous field (the assumption to make unless the geometry is known).
    Inhomogeneous,
    /// Case B: homogeneous field (only where the electrode shapes make it so).
    Homogeneous,
}

impl FieldCase {
    /// Reads `inhomogeneous` / `homogeneous`.
    pub fn parse(text: &str) -> Result<Self> {
        match text.trim().to_ascii_lowercase().as_str() {
            "inhomogeneous" | "a" | "case_a" => Ok(Self::Inhomogeneous),
            "homogeneous" | "b" | "case_b" => Ok(Self::Homogeneous),
            other => Err(Error::unknown(format!(
                "unknown `field` \"{other}\"; expected \"inhomogeneous\" or \"homogeneous\""
            ))),
        }
    }
    /// The name.
    pub fn as_str(self) -> &'static str {
        match self {
            Self::Inhomogeneous => "inhomogeneous",
            Self::Homogeneous => "homogeneous",
        }
    }
}

/// Grade of insulation.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum InsulationGrade {
    /// Needed only for the equipment to work; dimensioned here like basic insulation.
    Functional,
    /// Basic protection against electric shock.
    Basic,
    /// Independent insulation added to basic insulation.
    Supplementary,
    /// A single system equivalent to double insulation.
    Reinforced,
    /// Basic plus supplementary insulation.
    Double,
}

impl InsulationGrade {
    /// Reads `functional`, `basic`, `supplementary`, `reinforced`, `double`.
    pub fn parse(text: &str) -> Result<Self> {
        match text.trim().to_ascii_lowercase().as_str() {
            "functional" => Ok(Self::Functional),
            "basic" => Ok(Self::Basic),
            "supplementary" => Ok(Self::Supplementary),
            "reinforced" => Ok(Self::Reinforced),
            "double" => Ok(Self::Double),
            other => Err(Error::unknown(format!(
                "unknown `insulation` grade \"{other}\"; expected \"functional\", \"basic\", \"supplementary\", \"reinforced\" or \"double\""
            ))),
        }
    }
    /// The name.
    pub fn as_str(self) -> &'static str {
        match self {
            Self::Functional => "functional",
            Self::Basic => "basic",
            Self::Supplementary => "supplementary",
            Self::Reinforced => "reinforced",
            Self::Double => "double",
        }
    }
    /// True for reinforced and double insulation (the two that protect alone).
    pub fn is_double_strength(self) -> bool {
        matches!(self, Self::Reinforced | Self::Double)
    }
}

impl fmt::Display for InsulationGrade {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

/// The barriers of an isolated mains supply.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Barrier {
    /// Between the mains-connected primary and the touchable secondary.
    PrimarySecondary,
    /// Between the primary and protective earth (class I equipment).
    PrimaryEarth,
    /// Between the secondary and protective earth.
    SecondaryEarth,
    /// Between line and neutral ahead of the fuse.
    LineNeutralBeforeFuse,
}

impl Barrier {
    /// Reads `primary_secondary`, `primary_earth`, `secondary_earth`,
    /// `line_neutral_before_fuse`.
    pub fn parse(text: &str) -> Result<Self> {
        match text.trim().to_ascii_lowercase().replace(['-', ' '], "_").as_str() {
            "primary_secondary" => Ok(Self::PrimarySecondary),
            "primary_earth" => Ok(Self::PrimaryEarth),
            "secondary_earth" => Ok(Self::SecondaryEarth),
            "line_neutral_before_fuse" => Ok(Self::LineNeutralBeforeFuse),
            other => Err(Error::unknown(format!(
                "unknown `barrier` \"{other}\"; expected \"primary_secondary\", \"primary_earth\", \"secondary_earth\" or \"line_neutral_before_fuse\""
            ))),
        }
    }
    /// The name.
    pub fn as_str(self) -> &'static str {
        match self {
            Self::PrimarySecondary => "primary_secondary",
            Self::PrimaryEarth => "primary_earth",
            Self::SecondaryEarth => "secondary_earth",
            Self::LineNeutralBeforeFuse => "line_neutral_before_fuse",
        }
    }
    /// True where the barrier bridges the mains transients (the secondary–earth barrier sees
    /// only the secondary's own voltages).
    pub fn sees_mains_transients(self) -> bool {
        !matches!(self, Self::SecondaryEarth)
    }
}

impl fmt::Display for Barrier {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cti_boundaries() {
        // IEC 60664-1:2020 4.8.1.3 group limits (value recalled from memory)
        assert_eq!(MaterialGroup::from_cti(600.0).unwrap(), MaterialGroup::I);
        assert_eq!(MaterialGroup::from_cti(599.0).unwrap(), MaterialGroup::II);
        assert_eq!(MaterialGroup::from_cti(175.0).unwrap(), MaterialGroup::IIIa);
        assert_eq!(MaterialGroup::from_cti(100.0).unwrap(), MaterialGroup::IIIb);
        assert!(MaterialGroup::from_cti(99.0).is_err());
        assert!(MaterialGroup::from_cti(f64::NAN).is_err());
    }

    #[test]
    fn parse_errors_name_the_parameter() {
        assert!(MaterialGroup::parse("IV")
            .unwrap_err()
            .message()
            .contains("material_group"));
        assert!(PollutionDegree::from_number(4)
            .unwrap_err()
            .message()
            .contains("pollution_degree"));
        assert!(Barrier::parse("primary-secondary").is_ok());
    }
}
