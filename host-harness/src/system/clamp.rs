//! One vocabulary for clamp kinds: [`ClampKind`] and its spelling table.
//!
//! A clamp kind is written three ways, each kept for compatibility: the table key of a
//! scenario file (`[system.clamp.diode-zener]`), the `--clamp` form of `lenz turnoff`
//! (`zener:VZ:VF`) and the short name of [`lenz::turnoff::Clamp::kind`] (`zener`). They all
//! come from [`ClampKind::SPELLINGS`]; the description → core and description → plant mappings
//! of a clamp are here too, and nowhere else, with the reading of a `--clamp` form
//! ([`cli_clamp`]).

use lenz::turnoff::Clamp;

use crate::input_error::InputError;
use crate::plant;
use crate::scenario::ClampSpec;
use crate::si::{self, Unit};

/// The kind of clamp network that takes the coil current when the switch opens.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum ClampKind {
    /// Freewheel diode across the coil.
    Freewheel,
    /// Diode in series with a zener (or TVS) across the coil.
    DiodeZener,
    /// Clamp across the switch (avalanche or active clamp).
    AcrossSwitch,
    /// Resistor in series with a diode across the coil.
    ResistorDiode,
    /// No clamp: only the switch node's capacitance.
    Unclamped,
}

/// How one kind is spelled.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Spelling {
    /// The kind.
    pub kind: ClampKind,
    /// Table key in a scenario file: `[system.clamp.KEY]`.
    pub file_key: &'static str,
    /// First field of `lenz turnoff --clamp` (and [`lenz::turnoff::Clamp::kind`]).
    pub cli: &'static str,
    /// The whole `--clamp` form, with its values.
    pub cli_form: &'static str,
    /// For people.
    pub text: &'static str,
}

impl ClampKind {
    /// Every kind with its spellings (the one table).
    pub const SPELLINGS: [Spelling; 5] = [
        Spelling {
            kind: ClampKind::Freewheel,
            file_key: "freewheel",
            cli: "diode",
            cli_form: "diode:VF",
            text: "freewheel diode",
        },
        Spelling {
            kind: ClampKind::DiodeZener,
            file_key: "diode-zener",
            cli: "zener",
            cli_form: "zener:VZ:VF",
            text: "diode plus zener",
        },
        Spelling {
            kind: ClampKind::AcrossSwitch,
            file_key: "across-switch",
            cli: "switch",
            cli_form: "switch:VCL",
            text: "clamp across the switch",
        },
        Spelling {
            kind: ClampKind::ResistorDiode,
            file_key: "resistor-diode",
            cli: "resistor",
            cli_form: "resistor:RS:VF",
            text: "resistor plus diode",
        },
        Spelling {
            kind: ClampKind::Unclamped,
            file_key: "unclamped",
            cli: "none",
            cli_form: "none:CP",
            text: "unclamped",
        },
    ];

    /// This kind's spellings.
    #[must_use]
    pub fn spelling(self) -> &'static Spelling {
        let k = match self {
            ClampKind::Freewheel => 0,
            ClampKind::DiodeZener => 1,
            ClampKind::AcrossSwitch => 2,
            ClampKind::ResistorDiode => 3,
            ClampKind::Unclamped => 4,
        };
        &Self::SPELLINGS[k]
    }

    /// The kind a `--clamp` form starts with.
    #[must_use]
    pub fn from_cli(name: &str) -> Option<ClampKind> {
        Self::SPELLINGS
            .iter()
            .find(|s| s.cli == name)
            .map(|s| s.kind)
    }

    /// The `--clamp` forms for an error message: `diode:VF, zener:VZ:VF, … or none:CP`.
    #[must_use]
    pub fn cli_forms() -> String {
        let forms: Vec<&str> = Self::SPELLINGS.iter().map(|s| s.cli_form).collect();
        match forms.split_last() {
            Some((last, rest)) => format!("{} or {last}", rest.join(", ")),
            None => String::new(),
        }
    }

    /// The kind of a core clamp.
    #[must_use]
    pub fn of_core(c: &lenz::turnoff::Clamp) -> ClampKind {
        use lenz::turnoff::Clamp as T;
        match c {
            T::Diode { .. } => ClampKind::Freewheel,
            T::Zener { .. } => ClampKind::DiodeZener,
            T::Switch { .. } => ClampKind::AcrossSwitch,
            T::Resistor { .. } => ClampKind::ResistorDiode,
            T::Unclamped { .. } => ClampKind::Unclamped,
        }
    }

    /// The kind of a described clamp.
    #[must_use]
    pub fn of_spec(c: &ClampSpec) -> ClampKind {
        match c {
            ClampSpec::Freewheel { .. } => ClampKind::Freewheel,
            ClampSpec::DiodeZener { .. } => ClampKind::DiodeZener,
            ClampSpec::AcrossSwitch { .. } => ClampKind::AcrossSwitch,
            ClampSpec::ResistorDiode { .. } => ClampKind::ResistorDiode,
            ClampSpec::Unclamped { .. } => ClampKind::Unclamped,
        }
    }

    /// The kind of a plant clamp.
    #[must_use]
    pub fn of_plant(c: &plant::Clamp) -> ClampKind {
        match c {
            plant::Clamp::Freewheel { .. } => ClampKind::Freewheel,
            plant::Clamp::DiodeZener { .. } => ClampKind::DiodeZener,
            plant::Clamp::AcrossSwitch { .. } => ClampKind::AcrossSwitch,
            plant::Clamp::ResistorDiode { .. } => ClampKind::ResistorDiode,
            plant::Clamp::Unclamped { .. } => ClampKind::Unclamped,
        }
    }
}

impl std::fmt::Display for ClampKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.spelling().text)
    }
}

/// The plan-side (core) form of a described clamp: the firmware's off path and the plan's
/// switch-off figures.
#[must_use]
pub fn core_clamp(c: &ClampSpec) -> lenz::turnoff::Clamp {
    use lenz::turnoff::Clamp as T;
    match *c {
        ClampSpec::Freewheel { diode_drop } => T::Diode {
            forward_v: diode_drop.get() as f32,
        },
        ClampSpec::DiodeZener { diode_drop, zener } => T::Zener {
            zener_v: zener.get() as f32,
            forward_v: diode_drop.get() as f32,
        },
        ClampSpec::AcrossSwitch { voltage } => T::Switch {
            clamp_v: voltage.get() as f32,
        },
        ClampSpec::ResistorDiode {
            resistor,
            diode_drop,
        } => T::Resistor {
            resistance_ohm: resistor.get() as f32,
            forward_v: diode_drop.get() as f32,
        },
        ClampSpec::Unclamped { capacitance } => T::Unclamped {
            capacitance_f: capacitance.get() as f32,
        },
    }
}

/// The plant form of a described clamp, its defining value (clamp voltage, zener, resistor or
/// capacitance; not a diode's drop in series with it) scaled by `k` (a sweep's draw).
#[must_use]
pub fn plant_clamp(c: &ClampSpec, k: f64) -> plant::Clamp {
    match *c {
        ClampSpec::Freewheel { diode_drop } => plant::Clamp::Freewheel {
            vf_v: diode_drop.get() * k,
        },
        ClampSpec::DiodeZener { diode_drop, zener } => plant::Clamp::DiodeZener {
            vf_v: diode_drop.get(),
            vz_v: zener.get() * k,
        },
        ClampSpec::AcrossSwitch { voltage } => plant::Clamp::AcrossSwitch {
            vcl_v: voltage.get() * k,
        },
        ClampSpec::ResistorDiode {
            resistor,
            diode_drop,
        } => plant::Clamp::ResistorDiode {
            r_ohm: resistor.get() * k,
            vf_v: diode_drop.get(),
        },
        ClampSpec::Unclamped { capacitance } => plant::Clamp::Unclamped {
            c_f: capacitance.get() * k,
        },
    }
}

/// Reads the `--clamp` form of `lenz turnoff` (`zener:VZ:VF`, values with SI prefixes) as a
/// core clamp.
///
/// # Errors
///
/// Not one of the forms of [`ClampKind::SPELLINGS`], a value that is not one in its unit, or
/// a resistor of 0 Ω or less; the message names `--clamp` and the part.
pub fn cli_clamp(text: &str) -> Result<Clamp, InputError> {
    let parts: Vec<&str> = text.split(':').collect();
    let bad_form = || {
        InputError(format!(
            "--clamp: '{text}' is not a clamp; use {}",
            ClampKind::cli_forms()
        ))
    };
    let value = |k: usize, name: &str, unit: Unit| -> Result<f32, InputError> {
        let part = parts.get(k).ok_or_else(bad_form)?;
        si::parse(part, unit)
            .map(|v| v as f32)
            .map_err(|e| InputError(format!("--clamp {name}: {e}")))
    };
    let kind = parts
        .first()
        .and_then(|k| ClampKind::from_cli(k))
        .ok_or_else(bad_form)?;
    let (clamp, n) = match kind {
        ClampKind::Freewheel => (
            Clamp::Diode {
                forward_v: value(1, "VF", Unit::Volt)?,
            },
            2,
        ),
        ClampKind::DiodeZener => (
            Clamp::Zener {
                zener_v: value(1, "VZ", Unit::Volt)?,
                forward_v: value(2, "VF", Unit::Volt)?,
            },
            3,
        ),
        ClampKind::AcrossSwitch => (
            Clamp::Switch {
                clamp_v: value(1, "VCL", Unit::Volt)?,
            },
            2,
        ),
        ClampKind::ResistorDiode => (
            Clamp::Resistor {
                resistance_ohm: value(1, "RS", Unit::Ohm)?,
                forward_v: value(2, "VF", Unit::Volt)?,
            },
            3,
        ),
        ClampKind::Unclamped => (
            Clamp::Unclamped {
                capacitance_f: value(1, "CP", Unit::Farad)?,
            },
            2,
        ),
    };
    if parts.len() != n {
        return Err(bad_form());
    }
    if let Clamp::Resistor { resistance_ohm, .. } = clamp
        && resistance_ohm.is_finite()
        && resistance_ohm <= 0.0
    {
        // As in a scenario file: a resistor clamp of 0 Ω is a freewheel diode.
        return Err(InputError(format!(
            "--clamp RS: '{}' is not a clamp resistor: must be above 0 Ω (for a plain diode \
             use diode:VF)",
            parts.get(1).copied().unwrap_or("")
        )));
    }
    Ok(clamp)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn specs() -> Vec<ClampSpec> {
        let text = |key: &str, body: &str| format!("[clamp.{key}]\n{body}\n");
        [
            text("freewheel", "diode_drop = 0.7"),
            text("diode-zener", "diode_drop = 0.7\nzener = 24"),
            text("across-switch", "voltage = 48"),
            text("resistor-diode", "resistor = 100\ndiode_drop = 0.7"),
            text("unclamped", "capacitance = 1e-9"),
        ]
        .iter()
        .map(|t| {
            #[derive(serde::Deserialize)]
            struct W {
                clamp: ClampSpec,
            }
            toml::from_str::<W>(t).map(|w| w.clamp).unwrap()
        })
        .collect()
    }

    #[test]
    fn file_keys_are_the_ones_serde_reads() {
        // Each table's file key, written into a file, deserializes into that kind.
        for (spec, s) in specs().iter().zip(ClampKind::SPELLINGS.iter()) {
            assert_eq!(ClampKind::of_spec(spec), s.kind, "{}", s.file_key);
            let json = serde_json::to_value(spec).unwrap();
            let key = json.as_object().and_then(|o| o.keys().next().cloned());
            assert_eq!(key.as_deref(), Some(s.file_key));
        }
    }

    #[test]
    fn the_three_forms_agree() {
        for spec in specs() {
            let kind = ClampKind::of_spec(&spec);
            let core = core_clamp(&spec);
            assert_eq!(ClampKind::of_core(&core), kind);
            assert_eq!(ClampKind::of_plant(&plant_clamp(&spec, 1.0)), kind);
            // The core's own short name is the CLI spelling.
            assert_eq!(core.kind(), kind.spelling().cli);
            assert_eq!(ClampKind::from_cli(kind.spelling().cli), Some(kind));
            assert!(kind.spelling().cli_form.starts_with(kind.spelling().cli));
        }
        assert_eq!(ClampKind::from_cli("zener:1"), None);
        assert_eq!(
            ClampKind::cli_forms(),
            "diode:VF, zener:VZ:VF, switch:VCL, resistor:RS:VF or none:CP"
        );
    }
}
