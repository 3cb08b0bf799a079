//! Size limits of a scenario file, so that reading, planning and running it take bounded
//! memory and time. Each is a clear error, never a silent cut.
//!
//! - file size: 1 MiB (the TOML reader holds about 45 bytes per byte of text while parsing);
//! - scenarios per file: 1 000 (every scenario's result, properties and events, is kept for
//!   the report);
//! - events per scenario: 10 000 (each is kept with its result);
//! - simulated time per scenario: 60 s, 2 000 000 ticks and 20 000 000 PWM periods (checked
//!   with the scenario).
//!
//! A waveform (`lenz sim --csv`, `--plot`) is kept for one scenario at a time: 56 bytes per
//! tick, at most 112 MB at the tick limit.

use super::schema::File;

/// Largest scenario file, bytes.
pub const MAX_FILE_BYTES: usize = 1 << 20;
/// Most scenarios in one file.
pub const MAX_SCENARIOS: usize = 1_000;
/// Most events in one scenario.
pub const MAX_EVENTS: usize = 10_000;

/// The file's text is too long: the problem, in words.
#[must_use]
pub fn size_problem(text: &str) -> Option<String> {
    (text.len() > MAX_FILE_BYTES).then(|| {
        format!(
            "the file has {} bytes; a scenario file has at most {MAX_FILE_BYTES} bytes (1 MiB)",
            text.len()
        )
    })
}

/// Too many scenarios or events: the key (and the scenario index, for events) and the problem.
#[must_use]
pub fn count_problem(f: &File) -> Option<(String, Option<usize>, String)> {
    if f.scenarios.len() > MAX_SCENARIOS {
        return Some((
            "scenario".into(),
            None,
            format!(
                "{} scenarios; a file has at most {MAX_SCENARIOS}",
                f.scenarios.len()
            ),
        ));
    }
    f.scenarios.iter().enumerate().find_map(|(k, s)| {
        (s.events.len() > MAX_EVENTS).then(|| {
            (
                format!("scenario[{k}].event"),
                Some(k),
                format!(
                    "{} events; a scenario has at most {MAX_EVENTS}",
                    s.events.len()
                ),
            )
        })
    })
}
