//! What every subcommand shares: the cautions, the error that ends a command with exit code 2,
//! and the clap value parsers of SI values. (Re-exported by [`crate::cli`]; here so that the
//! commands do not import the command enum that imports them.)

use crate::si::{self, Unit};

/// Caution printed with results that involve switching inductive loads.
pub const CAUTION: &str = "CAUTION: switching an inductive load off can produce hundreds of \
volts and dumps its stored energy into the switch and clamp. These figures are design aids, not \
a safety approval: mains-powered coils are lethal; follow local electrical codes and licensed \
practice.";

/// Caution printed with motor results, beside [`CAUTION`].
pub const MOTOR_CAUTION: &str = "CAUTION: a motor draws up to its stall current at every start, \
nearly twice that when reversed at speed, and returns its current to the supply when it coasts \
or brakes, which can lift a bus that cannot sink current above its rating. Keep hands clear of \
the driven mechanism while testing.";

/// An error that ends a command with exit code 2 (the library's
/// [`crate::input_error::InputError`], under the name the commands have always used).
pub use crate::input_error::InputError as CliError;

macro_rules! unit_parsers {
    ($($name:ident => $unit:expr),* $(,)?) => {
        $(
            /// Clap value parser for this unit (SI prefixes accepted).
            ///
            /// # Errors
            ///
            /// The text is not a value in this unit.
            pub fn $name(s: &str) -> Result<f64, String> {
                si::parse(s, $unit).map_err(|e| e.to_string())
            }
        )*
    };
}

unit_parsers! {
    henry => Unit::Henry,
    ohm => Unit::Ohm,
    volt => Unit::Volt,
    ampere => Unit::Ampere,
    second => Unit::Second,
    hertz => Unit::Hertz,
    farad => Unit::Farad,
    celsius => Unit::Celsius,
    newton_metre => Unit::NewtonMetre,
    newton_metre_per_ampere => Unit::NewtonMetrePerAmpere,
    kilogram_square_metre => Unit::KilogramSquareMetre,
    newton_metre_second => Unit::NewtonMetreSecondPerRadian,
    plain => Unit::None,
}
