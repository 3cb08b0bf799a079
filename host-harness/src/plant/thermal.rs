//! First-order thermal model of the winding.
//!
//! # Model
//!
//! One thermal capacitance `C_th` (J/K) coupled to ambient through `R_th` (K/W), heated by the
//! winding's copper loss `P = R_w(T) i²`:
//! `C_th dT/dt = P − (T − T_a)/R_th`. Over an interval `Δt` with the mean power `P̄` held
//! (zero-order hold of the power), the exact update is
//! `T₁ = T_a + (T₀ − T_a) e^(−Δt/τ_th) + P̄ R_th (1 − e^(−Δt/τ_th))`, `τ_th = R_th C_th`.
//! The plant applies it every thermal step (1 ms by default): thermal time constants are
//! seconds to minutes, so the winding resistance is held constant over each step and the
//! electrical segments stay linear.

use lenz::Error;

/// Thermal path of the winding to ambient.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Thermal {
    /// Thermal resistance winding to ambient, K/W.
    pub r_th_k_per_w: f64,
    /// Thermal capacitance of the winding, J/K.
    pub c_th_j_per_k: f64,
    /// Ambient temperature, °C.
    pub ambient_c: f64,
}

impl Thermal {
    /// Checks the values.
    ///
    /// # Errors
    ///
    /// A thermal resistance or capacitance not finite or not positive, or an ambient
    /// temperature outside −200 ..= 400 °C.
    pub fn validate(&self) -> Result<Self, Error> {
        super::positive("r_th_k_per_w", self.r_th_k_per_w)?;
        super::positive("c_th_j_per_k", self.c_th_j_per_k)?;
        super::in_range("ambient_c", self.ambient_c, -200.0, 400.0)?;
        Ok(*self)
    }

    /// Exact update over `dt_s` with mean power `power_w` (module docs), °C.
    #[must_use]
    pub fn step(&self, temp_c: f64, power_w: f64, dt_s: f64) -> f64 {
        let x = dt_s / (self.r_th_k_per_w * self.c_th_j_per_k);
        let a = (-x).exp();
        let one_minus_a = -(-x).exp_m1();
        self.ambient_c + (temp_c - self.ambient_c) * a + power_w * self.r_th_k_per_w * one_minus_a
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn steps_compose_to_the_closed_form() {
        // 2 W into 20 K/W, 5 J/K from 25 °C: T(t) = 25 + 40 (1 − e^(−t/100 s)).
        let th = Thermal {
            r_th_k_per_w: 20.0,
            c_th_j_per_k: 5.0,
            ambient_c: 25.0,
        };
        let mut t = 25.0;
        for _ in 0..1000 {
            t = th.step(t, 2.0, 0.1);
        }
        let want = 25.0 + 40.0 * (1.0 - (-1.0f64).exp());
        assert!((t - want).abs() < 1e-10, "{t} vs {want}");
    }
}
