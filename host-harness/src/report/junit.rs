//! JUnit XML: one `<testsuite>` per scenario file, one `<testcase>` per scenario and property
//! (`classname` = `FILE: SCENARIO`, so scenarios of one name in two files stay apart,
//! `name` = the property, `file` = the scenario file as given). A property that does not hold
//! gets a `<failure>` with the measured value and the limit. Written by hand: the format needs
//! five elements and attribute escaping.

use std::fmt::Write as _;

use super::Outcome;

/// Escapes text for an XML attribute or element.
#[must_use]
pub fn escape(s: &str) -> String {
    let mut o = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => o.push_str("&amp;"),
            '<' => o.push_str("&lt;"),
            '>' => o.push_str("&gt;"),
            '"' => o.push_str("&quot;"),
            '\'' => o.push_str("&apos;"),
            c if (c as u32) < 0x20 && c != '\n' && c != '\t' => {
                let _ = write!(o, "&#{};", c as u32);
            }
            c => o.push(c),
        }
    }
    o
}

/// The JUnit document for `outcomes` (grouped by file in the given order).
#[must_use]
pub fn to_junit(outcomes: &[Outcome]) -> String {
    let mut files: Vec<&str> = Vec::new();
    for o in outcomes {
        if !files.contains(&o.file.as_str()) {
            files.push(&o.file);
        }
    }
    let total: usize = outcomes.iter().map(|o| o.result.properties.len()).sum();
    let failed: usize = outcomes
        .iter()
        .map(|o| o.result.properties.iter().filter(|p| !p.pass).count())
        .sum();
    let mut x = String::from("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    let _ = writeln!(
        x,
        "<testsuites name=\"lenz sim\" tests=\"{total}\" failures=\"{failed}\">"
    );
    for f in files {
        let mine: Vec<&Outcome> = outcomes.iter().filter(|o| o.file == f).collect();
        let tests: usize = mine.iter().map(|o| o.result.properties.len()).sum();
        let fails: usize = mine
            .iter()
            .map(|o| o.result.properties.iter().filter(|p| !p.pass).count())
            .sum();
        let system = mine.first().map_or("", |o| o.system.as_str());
        let _ = writeln!(
            x,
            "  <testsuite name=\"{}\" tests=\"{tests}\" failures=\"{fails}\" errors=\"0\">",
            escape(&format!("{f} ({system})"))
        );
        for o in mine {
            for p in &o.result.properties {
                let _ = write!(
                    x,
                    "    <testcase classname=\"{}\" name=\"{}\" file=\"{}\" time=\"0\"",
                    escape(&format!("{}: {}", o.file, o.scenario)),
                    escape(p.name),
                    escape(&o.file)
                );
                if p.pass {
                    x.push_str("/>\n");
                } else {
                    let msg = format!(
                        "{} = {} {} exceeds the limit {} {}",
                        p.name, p.value, p.unit, p.limit, p.unit
                    );
                    let _ = writeln!(
                        x,
                        ">\n      <failure message=\"{}\" type=\"property\"/>\n    </testcase>",
                        escape(&msg)
                    );
                }
            }
        }
        x.push_str("  </testsuite>\n");
    }
    x.push_str("</testsuites>\n");
    x
}

#[cfg(test)]
mod tests {
    use super::escape;

    #[test]
    fn escapes() {
        assert_eq!(escape("a<b & \"c\""), "a&lt;b &amp; &quot;c&quot;");
        assert_eq!(escape("x\u{1}"), "x&#1;");
    }
}
