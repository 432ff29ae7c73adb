//! One vocabulary for fitted parameters: every fit (linear, nonlinear, O–C, pulsar timing)
//! returns its parameters as [`Estimates`] over an enum of parameter names that implements
//! [`Parameter`]. Values, 1σ and covariance are looked up by the enum, never by a string; a
//! name typed by a user is parsed with [`parse_parameter`], which refuses an unknown name
//! and lists the known ones.

use serde::{Deserialize, Serialize};

/// A named parameter of one model family (e.g. the O–C models' `period_d`, a pulsar
/// model's spin frequency). Implemented by plain enums.
pub trait Parameter: Copy + Eq + std::fmt::Debug + 'static {
    /// Every parameter of the family, in a fixed order.
    const ALL: &'static [Self];
    /// The name used in files and JSON (snake_case, unit in the name: `period_d`).
    fn name(self) -> &'static str;
    /// Unit of the value, in words or symbols ("d", "s", "Hz", "1" for none).
    fn unit(self) -> &'static str;
}

/// A parameter name that is not one of its family.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("unknown parameter '{name}'; known parameters: {}", known.join(", "))]
pub struct UnknownParameter {
    /// The name given.
    pub name: String,
    /// Every known name.
    pub known: Vec<&'static str>,
}

/// The parameter of family `P` called `name` (exact match of [`Parameter::name`]).
pub fn parse_parameter<P: Parameter>(name: &str) -> Result<P, UnknownParameter> {
    let wanted = name.trim();
    P::ALL
        .iter()
        .copied()
        .find(|p| p.name() == wanted)
        .ok_or_else(|| UnknownParameter { name: name.to_string(), known: P::ALL.iter().map(|p| p.name()).collect() })
}

/// One fitted value.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Estimate<P> {
    /// Which parameter.
    pub parameter: P,
    /// Best-fit value, in the parameter's unit.
    pub value: f64,
    /// 1σ from the covariance matrix, same unit.
    pub sigma: f64,
}

/// Fitted parameters of one model with their covariance.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Estimates<P> {
    /// The parameters, in the order of `value` and of the covariance rows.
    pub parameters: Vec<P>,
    /// Best-fit values.
    pub value: Vec<f64>,
    /// Covariance matrix, row-major, in the products of the parameters' units.
    pub covariance: Vec<Vec<f64>>,
}

impl<P: Parameter> Estimates<P> {
    /// Parameters, values and covariance; `None` unless the lengths agree
    /// (`value.len() == parameters.len()` and a square covariance of that size).
    pub fn new(parameters: Vec<P>, value: Vec<f64>, covariance: Vec<Vec<f64>>) -> Option<Estimates<P>> {
        let n = parameters.len();
        (value.len() == n && covariance.len() == n && covariance.iter().all(|r| r.len() == n)).then_some(Estimates {
            parameters,
            value,
            covariance,
        })
    }

    /// Position of `p`, if the model has it.
    pub fn index(&self, p: P) -> Option<usize> {
        self.parameters.iter().position(|&q| q == p)
    }

    /// Value of `p`.
    pub fn value(&self, p: P) -> Option<f64> {
        self.index(p).map(|i| self.value[i])
    }

    /// 1σ of `p` (square root of the covariance diagonal; NaN when negative).
    pub fn sigma(&self, p: P) -> Option<f64> {
        self.index(p).map(|i| self.covariance[i][i].sqrt())
    }

    /// Covariance of `a` and `b`.
    pub fn covariance_of(&self, a: P, b: P) -> Option<f64> {
        Some(self.covariance[self.index(a)?][self.index(b)?])
    }

    /// Every parameter as an [`Estimate`], in order.
    pub fn estimates(&self) -> Vec<Estimate<P>> {
        self.parameters
            .iter()
            .enumerate()
            .map(|(i, &parameter)| Estimate { parameter, value: self.value[i], sigma: self.covariance[i][i].sqrt() })
            .collect()
    }

    /// The estimate of the parameter called `name`; an unknown name or one this model does
    /// not fit is refused with the list of names it does have.
    pub fn by_name(&self, name: &str) -> Result<Estimate<P>, UnknownParameter> {
        let refuse =
            || UnknownParameter { name: name.to_string(), known: self.parameters.iter().map(|p| p.name()).collect() };
        let p = parse_parameter::<P>(name).map_err(|_| refuse())?;
        let i = self.index(p).ok_or_else(refuse)?;
        Ok(Estimate { parameter: p, value: self.value[i], sigma: self.covariance[i][i].sqrt() })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
    #[serde(rename_all = "snake_case")]
    enum Toy {
        EpochD,
        PeriodD,
        QuadraticD,
    }

    impl Parameter for Toy {
        const ALL: &'static [Toy] = &[Toy::EpochD, Toy::PeriodD, Toy::QuadraticD];
        fn name(self) -> &'static str {
            match self {
                Toy::EpochD => "epoch_d",
                Toy::PeriodD => "period_d",
                Toy::QuadraticD => "quadratic_d",
            }
        }
        fn unit(self) -> &'static str {
            "d"
        }
    }

    #[test]
    fn lookups_by_enum_and_by_name() {
        let e = Estimates::new(vec![Toy::EpochD, Toy::PeriodD], vec![1.0, 2.0], vec![vec![4.0, 0.5], vec![0.5, 9.0]])
            .unwrap();
        assert_eq!(e.value(Toy::PeriodD), Some(2.0));
        assert_eq!(e.sigma(Toy::EpochD), Some(2.0));
        assert_eq!(e.covariance_of(Toy::EpochD, Toy::PeriodD), Some(0.5));
        assert_eq!(e.value(Toy::QuadraticD), None);
        assert_eq!(e.by_name("period_d").unwrap().sigma, 3.0);
        let refused = e.by_name("quadratic_d").unwrap_err();
        assert_eq!(refused.known, vec!["epoch_d", "period_d"]);
        let unknown = parse_parameter::<Toy>("perod_d").unwrap_err();
        assert_eq!(
            unknown.to_string(),
            "unknown parameter 'perod_d'; known parameters: epoch_d, period_d, quadratic_d"
        );
        assert!(Estimates::new(vec![Toy::EpochD], vec![1.0, 2.0], vec![vec![1.0]]).is_none());
    }
}
