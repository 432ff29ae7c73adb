//! Ephemeris models of the O–C diagram, as a least-squares model for `fit`.
//!
//! O − C(E, t) = ΔT₀ + ΔP·E [+ Q·E²] [+ τ(t)]
//!
//! where E is the cycle number, t the time since the reference epoch, Q = ½ dP/dE
//! (quadratic ephemeris, common practice; Sterken 2005, ASP Conf. Ser. 335, 3) and τ the
//! light-time delay of Irwin (1952, ApJ 116, 211). The companion's orbit is parameterised
//! for fitting as (a₁₂ sin i / c \[d\], P₃ \[d\], √e cos ω, √e sin ω, M₀ \[rad\]) with M₀ the mean
//! anomaly at the reference epoch; these stay well-behaved as e → 0.

use std::f64::consts::TAU;

use super::cycles::OcSeries;
use crate::fit::{LsqModel, Parameter, UnknownParameter, parse_parameter};

/// Largest eccentricity the model evaluates (the fit is held inside e < 1).
pub const MAX_ECCENTRICITY: f64 = 0.95;

/// Which ephemeris model.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ModelKind {
    /// T = T₀ + P·E.
    Linear,
    /// T = T₀ + P·E + Q·E².
    Quadratic,
    /// Linear plus the light time of one companion.
    LinearLightTime,
    /// Quadratic plus the light time of one companion.
    QuadraticLightTime,
    /// Linear plus the light times of two companions (hierarchical: each orbits the
    /// barycentre of everything inside it; the delays add, common practice).
    LinearTwoLightTime,
    /// Quadratic plus the light times of two companions.
    QuadraticTwoLightTime,
}

impl ModelKind {
    /// Parses `linear`, `quadratic`, `light-time`, `quadratic+light-time`.
    pub fn parse(text: &str) -> Option<ModelKind> {
        match text.trim().to_ascii_lowercase().as_str() {
            "linear" => Some(ModelKind::Linear),
            "quadratic" => Some(ModelKind::Quadratic),
            "light-time" | "lighttime" | "ltte" => Some(ModelKind::LinearLightTime),
            "quadratic+light-time" | "quadratic-light-time" | "quadratic+ltte" => Some(ModelKind::QuadraticLightTime),
            "two-light-time" | "light-time-2" => Some(ModelKind::LinearTwoLightTime),
            "quadratic+two-light-time" | "quadratic-two-light-time" => Some(ModelKind::QuadraticTwoLightTime),
            _ => None,
        }
    }
    /// Name used in outputs.
    pub fn name(self) -> &'static str {
        match self {
            ModelKind::Linear => "linear",
            ModelKind::Quadratic => "quadratic",
            ModelKind::LinearLightTime => "light-time",
            ModelKind::QuadraticLightTime => "quadratic+light-time",
            ModelKind::LinearTwoLightTime => "two-light-time",
            ModelKind::QuadraticTwoLightTime => "quadratic+two-light-time",
        }
    }
    /// Whether the model has the quadratic term.
    pub fn has_quadratic(self) -> bool {
        matches!(self, ModelKind::Quadratic | ModelKind::QuadraticLightTime | ModelKind::QuadraticTwoLightTime)
    }
    /// Whether the model has a companion.
    pub fn has_light_time(self) -> bool {
        self.companions() > 0
    }
    /// Number of light-time companions (0, 1 or 2).
    pub fn companions(self) -> usize {
        match self {
            ModelKind::Linear | ModelKind::Quadratic => 0,
            ModelKind::LinearLightTime | ModelKind::QuadraticLightTime => 1,
            ModelKind::LinearTwoLightTime | ModelKind::QuadraticTwoLightTime => 2,
        }
    }
    /// The same polynomial with one companion fewer (`None` for polynomial models).
    pub fn with_one_companion_fewer(self) -> Option<ModelKind> {
        match self {
            ModelKind::Linear | ModelKind::Quadratic => None,
            ModelKind::LinearLightTime => Some(ModelKind::Linear),
            ModelKind::QuadraticLightTime => Some(ModelKind::Quadratic),
            ModelKind::LinearTwoLightTime => Some(ModelKind::LinearLightTime),
            ModelKind::QuadraticTwoLightTime => Some(ModelKind::QuadraticLightTime),
        }
    }
    /// Whether `self` is nested in `richer` (fixing parameters of `richer` gives `self`).
    pub fn is_nested_in(self, richer: ModelKind) -> bool {
        self != richer && self.companions() <= richer.companions() && (!self.has_quadratic() || richer.has_quadratic())
    }
    /// Number of polynomial parameters (2 or 3).
    pub fn n_polynomial(self) -> usize {
        if self.has_quadratic() { 3 } else { 2 }
    }
    /// Total number of parameters.
    pub fn n_params(self) -> usize {
        self.n_polynomial() + 5 * self.companions()
    }
    /// The fitted parameters, in the order of the parameter vector and covariance rows.
    pub fn parameters(self) -> Vec<OcParameter> {
        use OcParameter::*;
        let mut v = vec![EpochShiftD, PeriodShiftD];
        if self.has_quadratic() {
            v.push(QuadraticD);
        }
        if self.companions() >= 1 {
            v.extend([ProjectedLightTimeD, CompanionPeriodD, SqrtECosOmega, SqrtESinOmega, MeanAnomalyAtEpochRad]);
        }
        if self.companions() == 2 {
            v.extend([
                Companion2ProjectedLightTimeD,
                Companion2PeriodD,
                Companion2SqrtECosOmega,
                Companion2SqrtESinOmega,
                Companion2MeanAnomalyAtEpochRad,
            ]);
        }
        v
    }
    /// Parameter names with units, in order (the [`Parameter::name`] of [`Self::parameters`]).
    pub fn parameter_names(self) -> Vec<&'static str> {
        self.parameters().into_iter().map(Parameter::name).collect()
    }
    /// Every model kind, in order of complexity.
    pub const ALL: [ModelKind; 6] = [
        ModelKind::Linear,
        ModelKind::Quadratic,
        ModelKind::LinearLightTime,
        ModelKind::QuadraticLightTime,
        ModelKind::LinearTwoLightTime,
        ModelKind::QuadraticTwoLightTime,
    ];
}

impl std::fmt::Display for ModelKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

/// A model name that is not one of the O–C models.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error(
    "unknown O–C model '{0}'; the models are linear, quadratic, light-time, quadratic+light-time, two-light-time and quadratic+two-light-time"
)]
pub struct UnknownModel(pub String);

impl std::str::FromStr for ModelKind {
    type Err = UnknownModel;
    fn from_str(s: &str) -> Result<ModelKind, UnknownModel> {
        ModelKind::parse(s).ok_or_else(|| UnknownModel(s.trim().to_string()))
    }
}

impl serde::Serialize for ModelKind {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.name())
    }
}

impl<'de> serde::Deserialize<'de> for ModelKind {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<ModelKind, D::Error> {
        let text = String::deserialize(d)?;
        text.parse().map_err(serde::de::Error::custom)
    }
}

/// A fitted parameter of the O–C models (see [`ModelKind::parameters`]). Names carry the
/// unit: `_d` days, `_rad` radians; the (√e cos ω, √e sin ω) pair is dimensionless.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum OcParameter {
    /// ΔT₀: the fitted epoch minus the reference epoch, days.
    EpochShiftD,
    /// ΔP: the fitted period minus the reference period, days.
    PeriodShiftD,
    /// Q = ½ dP/dE, days per cycle².
    QuadraticD,
    /// First companion: a₁₂ sin i / c, days.
    ProjectedLightTimeD,
    /// First companion: orbital period P₃, days.
    CompanionPeriodD,
    /// First companion: √e cos ω.
    SqrtECosOmega,
    /// First companion: √e sin ω.
    SqrtESinOmega,
    /// First companion: mean anomaly at the reference epoch, radians.
    MeanAnomalyAtEpochRad,
    /// Second companion: a sin i / c, days.
    Companion2ProjectedLightTimeD,
    /// Second companion: orbital period, days.
    Companion2PeriodD,
    /// Second companion: √e cos ω.
    Companion2SqrtECosOmega,
    /// Second companion: √e sin ω.
    Companion2SqrtESinOmega,
    /// Second companion: mean anomaly at the reference epoch, radians.
    Companion2MeanAnomalyAtEpochRad,
}

impl Parameter for OcParameter {
    const ALL: &'static [OcParameter] = &[
        OcParameter::EpochShiftD,
        OcParameter::PeriodShiftD,
        OcParameter::QuadraticD,
        OcParameter::ProjectedLightTimeD,
        OcParameter::CompanionPeriodD,
        OcParameter::SqrtECosOmega,
        OcParameter::SqrtESinOmega,
        OcParameter::MeanAnomalyAtEpochRad,
        OcParameter::Companion2ProjectedLightTimeD,
        OcParameter::Companion2PeriodD,
        OcParameter::Companion2SqrtECosOmega,
        OcParameter::Companion2SqrtESinOmega,
        OcParameter::Companion2MeanAnomalyAtEpochRad,
    ];
    fn name(self) -> &'static str {
        use OcParameter::*;
        match self {
            EpochShiftD => "epoch_shift_d",
            PeriodShiftD => "period_shift_d",
            QuadraticD => "quadratic_d",
            ProjectedLightTimeD => "projected_light_time_d",
            CompanionPeriodD => "companion_period_d",
            SqrtECosOmega => "sqrt_e_cos_omega",
            SqrtESinOmega => "sqrt_e_sin_omega",
            MeanAnomalyAtEpochRad => "mean_anomaly_at_epoch_rad",
            Companion2ProjectedLightTimeD => "companion2_projected_light_time_d",
            Companion2PeriodD => "companion2_period_d",
            Companion2SqrtECosOmega => "companion2_sqrt_e_cos_omega",
            Companion2SqrtESinOmega => "companion2_sqrt_e_sin_omega",
            Companion2MeanAnomalyAtEpochRad => "companion2_mean_anomaly_at_epoch_rad",
        }
    }
    fn unit(self) -> &'static str {
        use OcParameter::*;
        match self {
            SqrtECosOmega | SqrtESinOmega | Companion2SqrtECosOmega | Companion2SqrtESinOmega => "1",
            MeanAnomalyAtEpochRad | Companion2MeanAnomalyAtEpochRad => "rad",
            _ => "d",
        }
    }
}

impl std::fmt::Display for OcParameter {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

impl std::str::FromStr for OcParameter {
    type Err = UnknownParameter;
    fn from_str(s: &str) -> Result<OcParameter, UnknownParameter> {
        parse_parameter(s)
    }
}

/// Eccentricity and ω (rad) from (√e cos ω, √e sin ω), e capped at [`MAX_ECCENTRICITY`].
pub fn eccentricity_omega(c: f64, s: f64) -> (f64, f64) {
    let e = (c * c + s * s).min(MAX_ECCENTRICITY);
    (e, s.atan2(c))
}

/// The companion's orbit at one instant: what the delay and its derivatives share.
struct OrbitAt {
    e: f64,
    sin_w: f64,
    cos_w: f64,
    sin_ea: f64,
    cos_ea: f64,
    /// √(1 − e²).
    beta: f64,
}

impl OrbitAt {
    fn new(ltte: &[f64], t_d: f64) -> OrbitAt {
        let (e, w) = eccentricity_omega(ltte[2], ltte[3]);
        let ea = super::orbit::eccentric_anomaly(ltte[4] + TAU * t_d / ltte[1], e);
        let (sin_ea, cos_ea) = ea.sin_cos();
        let (sin_w, cos_w) = w.sin_cos();
        OrbitAt { e, sin_w, cos_w, sin_ea, cos_ea, beta: (1.0 - e * e).max(0.0).sqrt() }
    }
    /// Irwin's bracket sin ω cos E + √(1−e²) cos ω sin E (dimensionless).
    fn bracket(&self) -> f64 {
        self.sin_w * self.cos_ea + self.beta * self.cos_w * self.sin_ea
    }
}

/// Light-time delay (days) at time `t_d` since the epoch for LTTE parameters
/// `[a sin i / c (d), P₃ (d), √e cos ω, √e sin ω, M₀ (rad)]`.
///
/// Irwin (1952, ApJ 116, 211, eq. 1) written with the eccentric anomaly E:
/// τ = A·(sin ω cos E + √(1−e²) cos ω sin E), using r cos ν = a(cos E − e) and
/// r sin ν = a√(1−e²) sin E; equal to [`super::orbit::irwin_delay`] to rounding (tested)
/// without its true anomaly.
pub fn light_time_d(ltte: &[f64], t_d: f64) -> f64 {
    ltte[0] * OrbitAt::new(ltte, t_d).bracket()
}

/// Light-time delay (days) and its derivatives with respect to the five parameters
/// `[a sin i / c, P₃, √e cos ω, √e sin ω, M₀]`, analytically.
///
/// With τ as in [`light_time_d`], E depends on M = M₀ + 2πt/P₃ and e through Kepler's
/// equation, ∂E/∂M = 1/(1 − e cos E),
/// ∂E/∂e = sin E/(1 − e cos E). At e < 1e-9 (ω undefined) the (√e cos ω, √e sin ω)
/// derivatives fall back to central differences. Checked against central differences in
/// the tests below.
pub fn light_time_with_gradient_d(ltte: &[f64], t_d: f64) -> (f64, [f64; 5]) {
    let (a, p3, c, s) = (ltte[0], ltte[1], ltte[2], ltte[3]);
    let raw_e = c * c + s * s;
    let capped = raw_e >= MAX_ECCENTRICITY;
    let orbit = OrbitAt::new(ltte, t_d);
    let OrbitAt { e, sin_w, cos_w, sin_ea: sin_e, cos_ea: cos_e, beta } = orbit;
    let f = orbit.bracket();
    let df_dea = -sin_w * sin_e + beta * cos_w * cos_e;
    let dea_dm = 1.0 / (1.0 - e * cos_e);
    let mut g = [0.0; 5];
    g[0] = f;
    g[4] = a * df_dea * dea_dm;
    g[1] = g[4] * (-TAU * t_d / (p3 * p3));
    if raw_e < 1e-9 {
        for j in 2..4 {
            let h = 1e-6;
            let mut up = [ltte[0], ltte[1], ltte[2], ltte[3], ltte[4]];
            let mut dn = up;
            up[j] += h;
            dn[j] -= h;
            g[j] = (light_time_d(&up, t_d) - light_time_d(&dn, t_d)) / (2.0 * h);
        }
    } else {
        let df_de = if capped { 0.0 } else { df_dea * sin_e * dea_dm - cos_w * sin_e * e / beta.max(1e-300) };
        let df_dw = cos_w * cos_e - beta * sin_w * sin_e;
        g[2] = a * (df_de * 2.0 * c - df_dw * s / raw_e);
        g[3] = a * (df_de * 2.0 * s + df_dw * c / raw_e);
    }
    (a * f, g)
}

/// Evaluates the model O − C (days) for one timing.
pub fn evaluate(kind: ModelKind, params: &[f64], cycle: f64, t_d: f64) -> f64 {
    let mut v = params[0] + params[1] * cycle;
    let np = kind.n_polynomial();
    if kind.has_quadratic() {
        v += params[2] * cycle * cycle;
    }
    for c in 0..kind.companions() {
        v += light_time_d(&params[np + 5 * c..np + 5 * c + 5], t_d);
    }
    v
}

/// The model O − C (days) and its gradient with respect to every parameter of `kind`
/// (analytic: 1, E, E² and the light-time derivatives of [`light_time_with_gradient_d`]).
pub fn evaluate_with_gradient(kind: ModelKind, params: &[f64], cycle: f64, t_d: f64) -> (f64, Vec<f64>) {
    let np = kind.n_polynomial();
    let mut g = vec![0.0; kind.n_params()];
    g[0] = 1.0;
    g[1] = cycle;
    let mut v = params[0] + params[1] * cycle;
    if kind.has_quadratic() {
        g[2] = cycle * cycle;
        v += params[2] * cycle * cycle;
    }
    for c in 0..kind.companions() {
        let first = np + 5 * c;
        let (tau, grad) = light_time_with_gradient_d(&params[first..first + 5], t_d);
        v += tau;
        g[first..first + 5].copy_from_slice(&grad);
    }
    (v, g)
}

/// An O–C series with a model kind: the [`LsqModel`] handed to Levenberg–Marquardt.
#[derive(Debug, Clone)]
pub struct OcModel<'a> {
    /// The model.
    pub kind: ModelKind,
    /// The data.
    pub series: &'a OcSeries,
    /// Weights 1/σ² (days⁻²), possibly rescaled.
    pub weights: Vec<f64>,
}

impl LsqModel for OcModel<'_> {
    fn n_params(&self) -> usize {
        self.kind.n_params()
    }
    fn n_obs(&self) -> usize {
        self.series.len()
    }
    fn predict(&self, params: &[f64], out: &mut [f64]) {
        for (i, o) in out.iter_mut().enumerate() {
            *o = evaluate(self.kind, params, self.series.cycle[i], self.series.time_d[i]);
        }
    }
    fn jacobian(&self, params: &[f64], jac: &mut [f64]) {
        let p = self.kind.n_params();
        let np = self.kind.n_polynomial();
        let n = self.series.len();
        for i in 0..n {
            let e = self.series.cycle[i];
            jac[i * p] = 1.0;
            jac[i * p + 1] = e;
            if self.kind.has_quadratic() {
                jac[i * p + 2] = e * e;
            }
        }
        if !self.kind.has_light_time() {
            return;
        }
        // Analytic derivatives of Irwin's delay (Kepler's equation differentiated implicitly).
        for c in 0..self.kind.companions() {
            let first = np + 5 * c;
            let base = &params[first..first + 5];
            for i in 0..n {
                let (_, g) = light_time_with_gradient_d(base, self.series.time_d[i]);
                jac[i * p + first..i * p + first + 5].copy_from_slice(&g);
            }
        }
    }
    fn observed(&self) -> &[f64] {
        &self.series.oc_d
    }
    fn weight(&self) -> &[f64] {
        &self.weights
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The eccentric-anomaly form of the delay equals Irwin's true-anomaly form
    /// (`orbit::irwin_delay`, Irwin 1952 eq. 1) to rounding, e from 0 to 0.9.
    #[test]
    fn light_time_equals_irwins_true_anomaly_form() {
        for &(c, s) in &[(0.0, 0.0), (0.1, 0.0), (0.3, 0.2), (-0.5, 0.4), (0.0, -0.9)] {
            let l = [0.003, 3_100.0, c, s, 0.7];
            let (e, w) = eccentricity_omega(c, s);
            for k in 0..50 {
                let t = -9_000.0 + 371.3 * k as f64;
                let irwin = super::super::orbit::irwin_delay(l[0], e, w, l[4] + TAU * t / l[1]);
                assert!((light_time_d(&l, t) - irwin).abs() < 1e-15, "e = {e}, t = {t}");
            }
        }
    }

    /// The analytic gradient of the light-time delay agrees with central differences
    /// (invented orbits, e from 0.01 to 0.8, several times).
    #[test]
    fn analytic_light_time_gradient_matches_central_differences() {
        for &(c, s) in &[(0.1, 0.0), (0.3, 0.2), (-0.5, 0.4), (0.0, -0.7), (0.85, 0.2)] {
            let l = [0.003, 3_100.0, c, s, 0.7];
            for &t in &[-9_000.0, -1_234.5, 0.0, 777.0, 5_000.0] {
                let (v, g) = light_time_with_gradient_d(&l, t);
                assert!((v - light_time_d(&l, t)).abs() < 1e-15);
                for j in 0..5 {
                    let h = [1e-9, 1e-3, 1e-7, 1e-7, 1e-7][j];
                    let mut up = l;
                    let mut dn = l;
                    up[j] += h;
                    dn[j] -= h;
                    let num = (light_time_d(&up, t) - light_time_d(&dn, t)) / (2.0 * h);
                    let scale = g.iter().map(|x| x.abs()).fold(1e-12, f64::max);
                    assert!(
                        (g[j] - num).abs() < 1e-5 * scale,
                        "param {j}, e² = {}, t = {t}: {} vs {num}",
                        c * c + s * s,
                        g[j]
                    );
                }
            }
        }
    }
}
