//! Design rules: a check has an id, a description, a reference and a limit, and turns a
//! computed value into value, limit, margin and pass / warn / fail.
//!
//! Domains publish their built-in rules as a [`RuleBook`]; a recipe overrides limits by id
//! and adds its own rules (house rules). Nothing here knows about any particular domain.

use crate::error::{Error, Result};
use crate::report::{Field, Table};
use crate::units::{format_number, Quantity};
use std::fmt;

/// Which side of the limit is good.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Comparison {
    /// The value must not exceed the limit (stress, temperature, flux).
    AtMost,
    /// The value must not fall below the limit (margin, hold-up time).
    AtLeast,
}

impl Comparison {
    /// Reads `at_most` / `at_least` (also `<=` / `>=`).
    pub fn parse(text: &str) -> Result<Self> {
        match text.trim() {
            "at_most" | "<=" | "max" => Ok(Comparison::AtMost),
            "at_least" | ">=" | "min" => Ok(Comparison::AtLeast),
            other => Err(Error::unknown(format!(
                "unknown comparison '{other}'; expected \"at_most\" or \"at_least\""
            ))),
        }
    }
    /// The word used in tables.
    pub fn as_str(self) -> &'static str {
        match self {
            Comparison::AtMost => "at_most",
            Comparison::AtLeast => "at_least",
        }
    }
}

/// The verdict of a check.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum Status {
    /// Within the limit with more than the warning margin to spare.
    Pass,
    /// Within the limit, but closer than the warning margin.
    Warn,
    /// Beyond the limit.
    Fail,
}

impl fmt::Display for Status {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Status::Pass => "pass",
            Status::Warn => "warn",
            Status::Fail => "fail",
        })
    }
}

/// A design rule.
#[derive(Clone, Debug, PartialEq)]
pub struct Rule {
    /// Stable identifier, snake_case (`drain_voltage_derating`).
    pub id: String,
    /// What the rule protects, in one sentence.
    pub description: String,
    /// Where the limit comes from (standard and clause, book and equation, or
    /// `common practice, no published source`, or `house rule`).
    pub reference: String,
    /// Which side of the limit passes.
    pub comparison: Comparison,
    /// The limit, a quantity or a plain number.
    pub limit: Quantity,
    /// Relative margin below which a passing value is flagged `warn` (0.05 = 5 %).
    pub warn_margin: f64,
}

/// The outcome of one check.
#[derive(Clone, Debug, PartialEq)]
pub struct CheckResult {
    /// Rule id.
    pub id: String,
    /// Rule description.
    pub description: String,
    /// Rule reference.
    pub reference: String,
    /// Comparison used.
    pub comparison: Comparison,
    /// The checked value.
    pub value: Quantity,
    /// The limit.
    pub limit: Quantity,
    /// Relative margin: (limit − value)/|limit| for at-most, (value − limit)/|limit| for
    /// at-least. Positive passes.
    pub margin: f64,
    /// Verdict.
    pub status: Status,
}

impl Rule {
    /// Builds a rule, checking that the limit is finite and the warning margin in 0 … 1.
    pub fn new(
        id: &str,
        description: &str,
        reference: &str,
        comparison: Comparison,
        limit: Quantity,
        warn_margin: f64,
    ) -> Result<Self> {
        if id.is_empty()
            || !id
                .chars()
                .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || c == '_')
        {
            return Err(Error::invalid(format!(
                "rule id '{id}' must be snake_case (lowercase letters, digits, underscores)"
            )));
        }
        if !limit.value().is_finite() {
            return Err(Error::invalid(format!(
                "rule `{id}`: limit must be finite, got {limit}"
            )));
        }
        if !(0.0..=1.0).contains(&warn_margin) {
            return Err(Error::out_of_range(format!(
                "rule `{id}`: `warn_margin` must be between 0 and 1, got {}",
                format_number(warn_margin)
            )));
        }
        Ok(Self {
            id: id.into(),
            description: description.into(),
            reference: reference.into(),
            comparison,
            limit,
            warn_margin,
        })
    }

    /// Checks a value against the rule. The value must have the limit's dimension.
    pub fn check(&self, value: Quantity) -> Result<CheckResult> {
        if value.dimension() != self.limit.dimension() {
            return Err(Error::dimension(format!(
                "rule `{}` has a limit of {}, but the checked value is {}",
                self.id,
                self.limit.describe(),
                value.describe()
            )));
        }
        if !value.value().is_finite() {
            return Err(Error::invalid(format!(
                "rule `{}`: the checked value is not finite ({value})",
                self.id
            )));
        }
        let l = self.limit.value();
        let v = value.value();
        let diff = match self.comparison {
            Comparison::AtMost => l - v,
            Comparison::AtLeast => v - l,
        };
        let margin = if l != 0.0 { diff / l.abs() } else { diff };
        let status = if diff < 0.0 {
            Status::Fail
        } else if margin < self.warn_margin {
            Status::Warn
        } else {
            Status::Pass
        };
        Ok(CheckResult {
            id: self.id.clone(),
            description: self.description.clone(),
            reference: self.reference.clone(),
            comparison: self.comparison,
            value,
            limit: self.limit,
            margin,
            status,
        })
    }
}

impl CheckResult {
    /// The result as named values for a table row.
    pub fn fields(&self) -> Vec<Field> {
        vec![
            Field::new("id", self.id.as_str()),
            Field::new("status", self.status.to_string()),
            Field::new("value", self.value.to_string()),
            Field::new("comparison", self.comparison.as_str()),
            Field::new("limit", self.limit.to_string()),
            Field::new("margin_percent", (self.margin * 1000.0).round() / 10.0),
            Field::new("description", self.description.as_str()),
            Field::new("reference", self.reference.as_str()),
        ]
    }
}

/// Turns check results into a table, one row per check.
pub fn checks_table(results: &[CheckResult]) -> Table {
    let mut t = Table::new();
    for r in results {
        t.push_row(r.fields());
    }
    t
}

/// The worst status of a list of checks (`pass` for none).
pub fn worst_status(results: &[CheckResult]) -> Status {
    results
        .iter()
        .map(|r| r.status)
        .max()
        .unwrap_or(Status::Pass)
}

/// An ordered set of rules, with limits a recipe may override by id.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct RuleBook {
    rules: Vec<Rule>,
}

impl RuleBook {
    /// An empty book.
    pub fn new() -> Self {
        Self::default()
    }
    /// Adds a rule, or replaces the rule with the same id.
    pub fn add(&mut self, rule: Rule) {
        match self.rules.iter_mut().find(|r| r.id == rule.id) {
            Some(r) => *r = rule,
            None => self.rules.push(rule),
        }
    }
    /// The rules, in order.
    pub fn rules(&self) -> &[Rule] {
        &self.rules
    }
    /// The rule with an id.
    pub fn get(&self, id: &str) -> Result<&Rule> {
        self.rules
            .iter()
            .find(|r| r.id == id)
            .ok_or_else(|| self.unknown(id))
    }
    fn unknown(&self, id: &str) -> Error {
        let names: Vec<&str> = self.rules.iter().map(|r| r.id.as_str()).collect();
        Error::unknown(format!(
            "unknown rule id '{id}'{}",
            crate::script::suggest::did_you_mean(id, &names)
        ))
    }
    /// Overrides the limit of a rule; the new limit must have the old one's dimension.
    pub fn set_limit(&mut self, id: &str, limit: Quantity) -> Result<()> {
        let unknown = self.unknown(id);
        let r = self.rules.iter_mut().find(|r| r.id == id).ok_or(unknown)?;
        if limit.dimension() != r.limit.dimension() {
            return Err(Error::dimension(format!(
                "rule `{id}` has a limit of {}; the new limit {} has another dimension",
                r.limit.describe(),
                limit.describe()
            )));
        }
        if !limit.value().is_finite() {
            return Err(Error::invalid(format!(
                "rule `{id}`: limit must be finite, got {limit}"
            )));
        }
        r.limit = limit;
        Ok(())
    }
    /// Checks a value against the rule with an id.
    pub fn check(&self, id: &str, value: Quantity) -> Result<CheckResult> {
        self.get(id)?.check(value)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::Dimension;

    #[test]
    fn pass_warn_fail() {
        let r = Rule::new(
            "drain_voltage_derating",
            "drain voltage at most 85 % of rating",
            "house rule",
            Comparison::AtMost,
            Quantity::new(552.5, Dimension::VOLTAGE),
            0.05,
        )
        .unwrap();
        let v = |x| Quantity::new(x, Dimension::VOLTAGE);
        assert_eq!(r.check(v(450.0)).unwrap().status, Status::Pass);
        assert_eq!(r.check(v(540.0)).unwrap().status, Status::Warn);
        assert_eq!(r.check(v(560.0)).unwrap().status, Status::Fail);
        assert!(r.check(Quantity::new(1.0, Dimension::CURRENT)).is_err());
        let mut b = RuleBook::new();
        b.add(r);
        b.set_limit("drain_voltage_derating", v(600.0)).unwrap();
        assert_eq!(
            b.check("drain_voltage_derating", v(560.0)).unwrap().status,
            Status::Pass
        );
        let e = b.check("drain_voltage_deratin", v(1.0)).unwrap_err();
        assert!(
            e.message()
                .contains("did you mean `drain_voltage_derating`"),
            "{}",
            e.message()
        );
    }
}
