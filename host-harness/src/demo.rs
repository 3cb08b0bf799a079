//! The demo system: a small greenhouse controller (all values invented for the demo).
//!
//! - a 24 V irrigation solenoid valve, 120 mH ±10 %, 32 Ω ±5 % at 20 °C, freewheel diode
//!   0.7 V, supply 21.6 … 26.4 V, coil −20 … 85 °C, pull-in at 0.45 A (60 % of the nominal
//!   0.75 A);
//! - a 12 V relay that switches the vent motor, 0.3 H ±10 %, 120 Ω ±5 % at 20 °C, diode 0.7 V,
//!   supply 11.4 … 13.2 V, coil −20 … 70 °C, must-operate 75 % of 12 V (75 mA);
//! - the moving parts of both ([`armature`]): the valve plunger and the relay armature.
//!
//! The worst-case plans of the two coils come from the shipped scenario files
//! (`scenarios/valve.toml`, `scenarios/relay.toml`), which describe the whole loop; their
//! figures with bounds and corners are [`coil_figures`].

mod coil_table;

pub use coil_table::{COIL_FIGURES, CoilFigure, FigureBound, SCENARIO_FILES, coil_figures};

/// Valve inductance, H (invented).
pub const VALVE_INDUCTANCE_H: f64 = 0.120;
/// Valve winding resistance at 20 °C, Ω (invented).
pub const VALVE_RESISTANCE_OHM: f64 = 32.0;
/// Relay inductance, H (invented).
pub const RELAY_INDUCTANCE_H: f64 = 0.3;
/// Relay winding resistance at 20 °C, Ω (invented).
pub const RELAY_RESISTANCE_OHM: f64 = 120.0;
/// Freewheel diode drop of both coils, V (invented).
pub const DIODE_DROP_V: f64 = 0.7;

/// The moving parts of the demo valve and relay (all values invented for the demo): the
/// plunger of the irrigation valve and the armature of the vent-motor relay, with the same
/// constants for the plan (`lenz::armature`, f32) and the plant
/// ([`crate::plant::ArmatureDrive`], f64).
pub mod armature {
    use crate::plant::{ArmatureDriveSpec, ArmatureFaults, ArmatureSpec, GapCurve};
    use lenz::Error;
    use lenz::armature::{Armature, GapInductance, MagneticCircuit, Mechanics};

    /// The invented constants of one armature.
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct DemoArmature {
        /// Inductance at zero gap, H.
        pub zero_gap_h: f64,
        /// Gap at which the inductance halves, m.
        pub halving_gap_m: f64,
        /// Moving mass, kg.
        pub mass_kg: f64,
        /// Gap at the open stop, m.
        pub open_gap_m: f64,
        /// Residual gap at the closed stop, m.
        pub closed_gap_m: f64,
        /// Spring force at the open stop, N.
        pub spring_preload_n: f64,
        /// Spring rate, N/m.
        pub spring_rate_n_per_m: f64,
        /// Viscous damping, N·s/m.
        pub damping_n_s_per_m: f64,
        /// Constant load against closing, N.
        pub load_n: f64,
        /// Coefficient of restitution at the stops.
        pub restitution: f64,
        /// Winding resistance at 20 °C, Ω.
        pub winding_ohm: f64,
        /// Nominal supply, V.
        pub supply_v: f64,
    }

    /// The valve plunger: 0.36 H at zero gap halving every 0.6 mm, so 120 mH at the 1.2 mm
    /// open gap (the demo valve's inductance); 8 g; 5 N spring preload at 1 kN/m; 1.5 N of
    /// water pressure on the seat; 0.05 mm residual gap. Pull-in 0.44 A, hold 0.17 A.
    pub const VALVE: DemoArmature = DemoArmature {
        zero_gap_h: 0.36,
        halving_gap_m: 0.6e-3,
        mass_kg: 8e-3,
        open_gap_m: 1.2e-3,
        closed_gap_m: 0.05e-3,
        spring_preload_n: 5.0,
        spring_rate_n_per_m: 1000.0,
        damping_n_s_per_m: 2.0,
        load_n: 1.5,
        restitution: 0.3,
        winding_ohm: super::VALVE_RESISTANCE_OHM,
        supply_v: 24.0,
    };

    /// The relay armature: 0.9 H at zero gap halving every 0.25 mm, so 0.3 H at the 0.5 mm
    /// open gap (the demo relay's inductance); 1.5 g; 0.8 N return spring at 2 kN/m with the
    /// contact springs lumped as a 0.2 N load; 0.02 mm residual gap. Pull-in 71 mA.
    pub const RELAY: DemoArmature = DemoArmature {
        zero_gap_h: 0.9,
        halving_gap_m: 0.25e-3,
        mass_kg: 1.5e-3,
        open_gap_m: 0.5e-3,
        closed_gap_m: 0.02e-3,
        spring_preload_n: 0.8,
        spring_rate_n_per_m: 2000.0,
        damping_n_s_per_m: 0.3,
        load_n: 0.2,
        restitution: 0.4,
        winding_ohm: super::RELAY_RESISTANCE_OHM,
        supply_v: 12.0,
    };

    /// A rebound slower than this ends the bounce in the demo plants, m/s.
    pub const REST_SPEED_M_S: f64 = 1e-3;
    /// Switch, shunt and source resistance of the demo drives, Ω.
    pub const ON_PATH_OHM: f64 = 0.2;

    impl DemoArmature {
        /// The plant: this armature driven from its nominal supply through a switch with a
        /// freewheel diode, winding at 20 °C, no faults.
        #[must_use]
        pub fn drive(&self) -> ArmatureDriveSpec {
            ArmatureDriveSpec {
                armature: ArmatureSpec {
                    gap: GapCurve::Reluctance {
                        zero_gap_h: self.zero_gap_h,
                        halving_gap_m: self.halving_gap_m,
                    },
                    saturation_flux_vs: None,
                    mass_kg: self.mass_kg,
                    open_gap_m: self.open_gap_m,
                    closed_gap_m: self.closed_gap_m,
                    spring_preload_n: self.spring_preload_n,
                    spring_rate_n_per_m: self.spring_rate_n_per_m,
                    damping_n_s_per_m: self.damping_n_s_per_m,
                    load_n: self.load_n,
                    restitution: self.restitution,
                    rest_speed_m_s: REST_SPEED_M_S,
                    faults: ArmatureFaults::default(),
                },
                winding_ohm: self.winding_ohm,
                on_path_ohm: ON_PATH_OHM,
                supply_v: self.supply_v,
                freewheel_vf_v: super::DIODE_DROP_V,
            }
        }

        /// The plan-side armature with the same constants.
        ///
        /// # Errors
        ///
        /// None for the shipped values; the constructors validate like any other.
        pub fn plan(&self) -> Result<Armature, Error> {
            Armature::new(
                MagneticCircuit::new(
                    GapInductance::Reluctance {
                        zero_gap_h: self.zero_gap_h as f32,
                        halving_gap_m: self.halving_gap_m as f32,
                    },
                    None,
                )?,
                Mechanics {
                    open_gap_m: self.open_gap_m as f32,
                    closed_gap_m: self.closed_gap_m as f32,
                    spring_preload_n: self.spring_preload_n as f32,
                    spring_rate_n_per_m: self.spring_rate_n_per_m as f32,
                    load_n: self.load_n as f32,
                },
            )
        }
    }
}
