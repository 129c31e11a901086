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

/// The verdict of a check. Ordered from best to worst; `NotApplicable` sorts below `Pass`, so
/// [`worst_status`] of a list with any real verdict is that verdict.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum Status {
    /// The check does not apply to this design (its reason is in the description); it is
    /// reported so that nothing is dropped without a word, and it never counts as a failure.
    NotApplicable,
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
            Status::NotApplicable => "not_applicable",
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
    /// The rule's own (default) limit when `limit` was overridden
    /// ([`RuleBook::set_limit`], [`Rule::with_default`]); `None` when the limit is the default.
    pub default_limit: Option<Quantity>,
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
    /// The rule's default limit when the limit used was overridden; `None` otherwise. The
    /// description then ends with the override note ([`override_note`]).
    pub default_limit: Option<Quantity>,
}

/// The note an overridden limit adds to a rule's text: `overridden: limit L instead of the
/// default D` and, when the new limit lets more through than the default (higher for
/// at-most, lower for at-least), `(loosened)`.
pub fn override_note(comparison: Comparison, limit: Quantity, default: Quantity) -> String {
    format!(
        "overridden{}: limit {limit} instead of the default {default}",
        if loosens(comparison, limit, default) {
            " (loosened)"
        } else {
            ""
        }
    )
}

/// True when `limit` lets more through than `default`: higher for at-most rules, lower for
/// at-least rules.
pub fn loosens(comparison: Comparison, limit: Quantity, default: Quantity) -> bool {
    match comparison {
        Comparison::AtMost => limit.value() > default.value(),
        Comparison::AtLeast => limit.value() < default.value(),
    }
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
            default_limit: None,
        })
    }

    /// The rule with `default` as its own limit: when the limit it was built with differs
    /// from `default` (a house limit given in a specification), the rule is marked
    /// overridden, exactly as [`RuleBook::set_limit`] marks it.
    pub fn with_default(mut self, default: Quantity) -> Self {
        if default.dimension() == self.limit.dimension() && default.value() != self.limit.value() {
            self.default_limit = Some(default);
        }
        self
    }

    /// True when the limit differs from the rule's default.
    pub fn overridden(&self) -> bool {
        self.default_limit.is_some()
    }

    /// The rule's text: its description and, when the limit is overridden, the
    /// [`override_note`] with the new and the default limit.
    pub fn text(&self) -> String {
        match self.default_limit {
            Some(d) => format!(
                "{}; {}",
                self.description,
                override_note(self.comparison, self.limit, d)
            ),
            None => self.description.clone(),
        }
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
            description: self.text(),
            reference: self.reference.clone(),
            comparison: self.comparison,
            value,
            limit: self.limit,
            margin,
            status,
            default_limit: self.default_limit,
        })
    }

    /// A check that does not apply, kept so that it still shows: status `not_applicable`,
    /// `value` what the design provides, the limit zero in the value's dimension (shown
    /// blank in tables), margin zero, and `reason` after the description.
    pub fn not_applicable(&self, value: Quantity, reason: &str) -> CheckResult {
        CheckResult {
            id: self.id.clone(),
            description: format!("{}; not applicable: {reason}", self.text()),
            reference: self.reference.clone(),
            comparison: self.comparison,
            value,
            limit: Quantity::new(0.0, value.dimension()),
            margin: 0.0,
            status: Status::NotApplicable,
            default_limit: self.default_limit,
        }
    }
}

impl CheckResult {
    /// True when the limit used was overridden (it differs from the rule's default).
    pub fn overridden(&self) -> bool {
        self.default_limit.is_some()
    }
    /// True when the overridden limit lets more through than the default.
    pub fn loosened(&self) -> bool {
        self.default_limit
            .is_some_and(|d| loosens(self.comparison, self.limit, d))
    }
    /// The limit as text: blank for a check that does not apply, and followed by
    /// `(overridden, default D)` or `(overridden and loosened, default D)` when overridden.
    pub fn limit_text(&self) -> String {
        if self.status == Status::NotApplicable {
            return String::new();
        }
        match self.default_limit {
            Some(d) => format!(
                "{} (overridden{}, default {d})",
                self.limit,
                if self.loosened() { " and loosened" } else { "" }
            ),
            None => self.limit.to_string(),
        }
    }
    /// The result as named values for a table row: `limit_overridden` and `default_limit`
    /// (blank when not overridden) say whether the limit is the rule's own.
    pub fn fields(&self) -> Vec<Field> {
        let na = self.status == Status::NotApplicable;
        vec![
            Field::new("id", self.id.as_str()),
            Field::new("status", self.status.to_string()),
            Field::new("value", self.value.to_string()),
            Field::new("comparison", self.comparison.as_str()),
            Field::new(
                "limit",
                if na {
                    String::new()
                } else {
                    self.limit.to_string()
                },
            ),
            Field::new("limit_overridden", self.overridden()),
            Field::new(
                "default_limit",
                self.default_limit
                    .map(|d| d.to_string())
                    .unwrap_or_default(),
            ),
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

/// The worst status of a list of checks: `fail` over `warn` over `pass` over
/// `not_applicable`; `pass` for none.
pub fn worst_status(results: &[CheckResult]) -> Status {
    results
        .iter()
        .map(|r| r.status)
        .max()
        .unwrap_or(Status::Pass)
}

/// The ids of the checks whose limit was overridden, once each, in order, `(loosened)` after
/// those whose new limit lets more through: `drain_voltage_derating (loosened), hold_up_time`;
/// empty when every limit is the rule's own. Summaries carry it as `overridden_limits`.
pub fn overridden_limits(results: &[CheckResult]) -> String {
    let mut seen: Vec<String> = Vec::new();
    for r in results.iter().filter(|r| r.overridden()) {
        let item = if r.loosened() {
            format!("{} (loosened)", r.id)
        } else {
            r.id.clone()
        };
        if !seen.contains(&item) {
            seen.push(item);
        }
    }
    seen.join(", ")
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
    /// Overrides the limit of a rule; the new limit must have the old one's dimension, be
    /// finite, and keep the sign of a positive default (a positive default is a physical
    /// minimum or maximum — a distance, a voltage, a time, a ratio — for which zero or a
    /// negative value makes no sense). The rule keeps its default and is marked overridden
    /// ([`Rule::text`], [`CheckResult::default_limit`]); setting the default back clears
    /// the mark.
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
        let default = r.default_limit.unwrap_or(r.limit);
        if default.value() > 0.0 && limit.value() <= 0.0 {
            return Err(Error::out_of_range(format!(
                "rule `{id}`: the limit must be above zero like its default {default}, got {limit}"
            )));
        }
        r.limit = limit;
        r.default_limit = (limit.value() != default.value()).then_some(default);
        Ok(())
    }
    /// The rule with an id, reported as not applicable: see [`Rule::not_applicable`].
    pub fn not_applicable(&self, id: &str, value: Quantity, reason: &str) -> Result<CheckResult> {
        Ok(self.get(id)?.not_applicable(value, reason))
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
