//! CSV waveforms: a header row, then one row per recorded tick (the sampling instant).
//! Numbers are written in Rust's shortest round-trip form; a missing estimate is empty.

use std::io::{self, Write};

use crate::closed_loop::Waveform;

/// The column names, in order.
pub const HEADER: &str = "t_s,current_a,estimate_a,switch_v,output_v,supply_v,drive";
/// The columns a motor run adds after [`HEADER`]: rotor speed and bus voltage.
pub const MOTOR_COLUMNS: &str = "speed_rad_s,bus_v";

/// Writes the waveform as CSV to `w`, row by row (nothing is built in memory).
///
/// # Errors
///
/// What `w` reports.
pub fn write_csv(w: &mut impl Write, wave: &Waveform) -> io::Result<()> {
    let motor = !wave.speed_rad_s.is_empty();
    if motor {
        writeln!(w, "{HEADER},{MOTOR_COLUMNS}")?;
    } else {
        writeln!(w, "{HEADER}")?;
    }
    let get = |v: &[f64], k: usize| v.get(k).copied().unwrap_or(f64::NAN);
    let n = if motor { 9 } else { 7 };
    for k in 0..wave.t_s.len() {
        let cols = [
            get(&wave.t_s, k),
            get(&wave.current_a, k),
            get(&wave.estimate_a, k),
            get(&wave.switch_v, k),
            get(&wave.output_v, k),
            get(&wave.supply_v, k),
            get(&wave.drive, k),
            get(&wave.speed_rad_s, k),
            get(&wave.bus_v, k),
        ];
        for (j, v) in cols.iter().take(n).enumerate() {
            if j > 0 {
                w.write_all(b",")?;
            }
            if v.is_finite() {
                write!(w, "{v}")?;
            }
        }
        w.write_all(b"\n")?;
    }
    Ok(())
}

/// The waveform as CSV text.
#[must_use]
pub fn to_csv(w: &Waveform) -> String {
    let mut v = Vec::with_capacity(64 * (w.t_s.len() + 1));
    // Writing into a `Vec` cannot fail, and every byte written is UTF-8.
    let _ = write_csv(&mut v, w);
    String::from_utf8_lossy(&v).into_owned()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rows_and_missing_values() {
        let w = Waveform {
            t_s: vec![0.0, 1e-4],
            current_a: vec![0.0, 0.25],
            estimate_a: vec![f64::NAN, 0.24],
            switch_v: vec![24.0, 0.1],
            output_v: vec![24.0, 0.1],
            supply_v: vec![24.0, 23.9],
            drive: vec![0.0, 1.0],
            ..Waveform::default()
        };
        let csv = to_csv(&w);
        let lines: Vec<&str> = csv.lines().collect();
        assert_eq!(lines[0], HEADER);
        assert_eq!(lines[1], "0,0,,24,24,24,0");
        assert_eq!(lines[2], "0.0001,0.25,0.24,0.1,0.1,23.9,1");
        assert_eq!(lines.len(), 3);
    }

    #[test]
    fn a_motor_run_adds_speed_and_bus() {
        let w = Waveform {
            t_s: vec![0.0],
            current_a: vec![-0.5],
            estimate_a: vec![f64::NAN],
            switch_v: vec![12.0],
            output_v: vec![12.0],
            supply_v: vec![12.0],
            drive: vec![1.0],
            speed_rad_s: vec![-366.5],
            bus_v: vec![12.25],
            ..Waveform::default()
        };
        let csv = to_csv(&w);
        let lines: Vec<&str> = csv.lines().collect();
        assert_eq!(lines[0], format!("{HEADER},{MOTOR_COLUMNS}"));
        assert_eq!(lines[1], "0,-0.5,,12,12,12,1,-366.5,12.25");
    }
}
