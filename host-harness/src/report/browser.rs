//! Opens a report folder's page in a real browser (headless Chromium, Debian's `chromium`
//! package) and checks that every image and link on it resolves; writes a screenshot.
//!
//! The report page itself has no script. The check writes a small page of its own into a new
//! temporary folder that loads the report in a frame and, once everything has loaded, lists
//! every image that did not decode (`complete` and a non-zero `naturalWidth`), every link to a
//! file the browser cannot read, every in-page link (`#id`) to an element that does not exist
//! and every link that leaves the folder (a report must work offline). Chromium prints the
//! resulting page (`--dump-dom`), and the lines between two markers are the findings. A run
//! that finds no image or no link, or whose page script did not run, is an error, never a pass.
//!
//! Chromium is found as `LENZ_CHROMIUM`, else `chromium` or `chromium-browser` on `PATH`;
//! without it the check fails and says how to install it.

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::sync::atomic::{AtomicU32, Ordering};
use std::time::{Duration, Instant};

/// What to install when Chromium is missing.
pub const INSTALL_HINT: &str = "install it with `apt-get install chromium chromium-driver` \
                                (or set LENZ_CHROMIUM to the browser's path)";

/// How long one browser run may take before it is stopped (a watchdog, not a measurement).
const BROWSER_TIMEOUT: Duration = Duration::from_secs(180);

const BEGIN: &str = "LENZ-CHECK-BEGIN";
const END: &str = "LENZ-CHECK-END";

/// The findings of a browser run over a report page.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct PageCheck {
    /// Images on the page.
    pub images: usize,
    /// Links on the page.
    pub links: usize,
    /// Every image or link that does not resolve, as `kind: URL` (kinds: `image`, `link`,
    /// `anchor`, `external`).
    pub broken: Vec<String>,
}

impl PageCheck {
    /// Every image and link resolves, and there was something to check.
    #[must_use]
    pub fn ok(&self) -> bool {
        self.broken.is_empty() && self.images > 0 && self.links > 0
    }
}

impl std::fmt::Display for PageCheck {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{} images, {} links", self.images, self.links)?;
        if self.broken.is_empty() {
            write!(f, ", none broken")
        } else {
            write!(f, ", broken:")?;
            for b in &self.broken {
                write!(f, "\n  {b}")?;
            }
            Ok(())
        }
    }
}

/// The Chromium binary (module docs).
///
/// # Errors
///
/// Not found: a message with [`INSTALL_HINT`].
pub fn chromium() -> Result<PathBuf, String> {
    if let Some(p) = std::env::var_os("LENZ_CHROMIUM") {
        let p = PathBuf::from(p);
        return if p.is_file() {
            Ok(p)
        } else {
            Err(format!(
                "LENZ_CHROMIUM={}: no such file; {INSTALL_HINT}",
                p.display()
            ))
        };
    }
    let path = std::env::var_os("PATH").unwrap_or_default();
    for dir in std::env::split_paths(&path) {
        for name in ["chromium", "chromium-browser"] {
            let p = dir.join(name);
            if p.is_file() {
                return Ok(p);
            }
        }
    }
    Err(format!(
        "chromium not found on PATH: the report is checked in a real browser; {INSTALL_HINT}"
    ))
}

/// A `file://` URL of an absolute path, with every byte outside the unreserved set and `/`
/// percent-encoded.
#[must_use]
pub fn file_url(path: &Path) -> String {
    let mut u = String::from("file://");
    for b in path.to_string_lossy().bytes() {
        if b.is_ascii_alphanumeric() || b"/-._~".contains(&b) {
            u.push(char::from(b));
        } else {
            u.push_str(&format!("%{b:02X}"));
        }
    }
    u
}

/// A new empty folder under the system's temporary folder.
fn temp_dir() -> Result<PathBuf, String> {
    static NEXT: AtomicU32 = AtomicU32::new(0);
    let base = std::env::temp_dir();
    for _ in 0..1000 {
        let n = NEXT.fetch_add(1, Ordering::Relaxed);
        let d = base.join(format!("lenz-browser-{}-{n}", std::process::id()));
        match std::fs::create_dir(&d) {
            Ok(()) => return Ok(d),
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {}
            Err(e) => return Err(format!("cannot create {}: {e}", d.display())),
        }
    }
    Err(format!("no free folder name in {}", base.display()))
}

/// The checking page: loads `report_url` in a frame and lists what does not resolve.
fn checker_page(report_url: &str) -> String {
    format!(
        r#"<!DOCTYPE html>
<html><head><meta charset="utf-8"><title>report check</title></head><body>
<iframe id="report" src="{report_url}" width="1200" height="900"></iframe>
<pre id="out">script did not run</pre>
<script>
window.addEventListener('load', function () {{
  var out = ['{BEGIN}'];
  try {{
    var frame = document.getElementById('report');
    var d = frame.contentDocument;
    var page = frame.contentWindow.location.href.split('#')[0];
    var folder = page.substring(0, page.lastIndexOf('/') + 1);
    var imgs = d.images;
    out.push('images ' + imgs.length);
    for (var i = 0; i < imgs.length; i++) {{
      if (!imgs[i].complete || imgs[i].naturalWidth === 0) {{ out.push('broken image: ' + imgs[i].src); }}
    }}
    var links = d.querySelectorAll('a[href]');
    out.push('links ' + links.length);
    for (var j = 0; j < links.length; j++) {{
      var url = links[j].href;
      var hash = url.indexOf('#') >= 0 ? url.substring(url.indexOf('#') + 1) : '';
      var doc = url.split('#')[0];
      if (doc.indexOf(folder) !== 0) {{ out.push('broken external: ' + url); continue; }}
      if (doc === page) {{
        if (hash && !d.getElementById(decodeURIComponent(hash))) {{ out.push('broken anchor: ' + url); }}
        continue;
      }}
      try {{
        var x = new XMLHttpRequest();
        x.open('GET', doc, false);
        x.send();
        if (x.status !== 0 && x.status !== 200) {{ out.push('broken link: ' + url + ' (' + x.status + ')'); }}
      }} catch (e) {{ out.push('broken link: ' + url); }}
    }}
  }} catch (e) {{ out.push('error ' + e); }}
  out.push('{END}');
  document.getElementById('out').textContent = out.join('\n');
}});
</script></body></html>
"#
    )
}

/// Runs Chromium with `args` and the flags of a quiet, isolated headless run; its stdout.
fn run_chromium(browser: &Path, profile: &Path, args: &[String]) -> Result<String, String> {
    let mut child = Command::new(browser)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--hide-scrollbars",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .args(args)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .map_err(|e| format!("cannot start {}: {e}; {INSTALL_HINT}", browser.display()))?;
    let mut stdout = child.stdout.take();
    let reader = std::thread::spawn(move || {
        let mut s = String::new();
        if let Some(o) = stdout.as_mut() {
            let _ = std::io::Read::read_to_string(o, &mut s);
        }
        s
    });
    let start = Instant::now();
    let status = loop {
        match child.try_wait() {
            Ok(Some(st)) => break st,
            Ok(None) if start.elapsed() > BROWSER_TIMEOUT => {
                let _ = child.kill();
                let _ = child.wait();
                return Err(format!(
                    "{} did not finish within {} s",
                    browser.display(),
                    BROWSER_TIMEOUT.as_secs()
                ));
            }
            Ok(None) => std::thread::sleep(Duration::from_millis(50)),
            Err(e) => return Err(format!("waiting for {}: {e}", browser.display())),
        }
    };
    let out = reader.join().unwrap_or_default();
    if status.success() {
        Ok(out)
    } else {
        Err(format!("{} failed ({status})", browser.display()))
    }
}

/// Parses the findings between the markers of a dumped checking page.
///
/// # Errors
///
/// The markers are missing (the script did not run) or the page reported an error.
pub fn parse_findings(dom: &str) -> Result<PageCheck, String> {
    let body = dom
        .split_once(BEGIN)
        .and_then(|(_, rest)| rest.split_once(END))
        .map(|(b, _)| b)
        .ok_or_else(|| "the checking page's script did not run in the browser".to_string())?;
    let mut c = PageCheck::default();
    for line in body.lines().map(str::trim).filter(|l| !l.is_empty()) {
        if let Some(n) = line.strip_prefix("images ") {
            c.images = n.parse().map_err(|_| format!("bad line {line:?}"))?;
        } else if let Some(n) = line.strip_prefix("links ") {
            c.links = n.parse().map_err(|_| format!("bad line {line:?}"))?;
        } else if let Some(b) = line.strip_prefix("broken ") {
            c.broken.push(b.replace("&amp;", "&"));
        } else {
            return Err(format!("the browser check failed: {line}"));
        }
    }
    Ok(c)
}

/// Opens `index` (a report page) in headless Chromium, checks every image and link (module
/// docs) and writes a screenshot of the page (PNG, 1280 px wide) to `screenshot`.
///
/// # Errors
///
/// Chromium is missing or failed, the page could not be checked, or no screenshot was
/// written. Broken images and links are not errors here: they are in the [`PageCheck`].
pub fn check_page(index: &Path, screenshot: &Path) -> Result<PageCheck, String> {
    let browser = chromium()?;
    let index = index
        .canonicalize()
        .map_err(|e| format!("{}: {e}", index.display()))?;
    let work = temp_dir()?;
    let result = (|| {
        let checker = work.join("check.html");
        std::fs::write(&checker, checker_page(&file_url(&index)))
            .map_err(|e| format!("cannot write {}: {e}", checker.display()))?;
        let dom = run_chromium(
            &browser,
            &work.join("profile-check"),
            &[
                "--allow-file-access-from-files".to_string(),
                "--dump-dom".to_string(),
                file_url(&checker),
            ],
        )?;
        let found = parse_findings(&dom)?;
        let _ = std::fs::remove_file(screenshot);
        run_chromium(
            &browser,
            &work.join("profile-shot"),
            &[
                "--window-size=1280,2400".to_string(),
                format!("--screenshot={}", screenshot.display()),
                file_url(&index),
            ],
        )?;
        let png = std::fs::read(screenshot)
            .map_err(|e| format!("no screenshot at {}: {e}", screenshot.display()))?;
        if !png.starts_with(b"\x89PNG\r\n\x1a\n") {
            return Err(format!("{} is not a PNG image", screenshot.display()));
        }
        Ok(found)
    })();
    let _ = std::fs::remove_dir_all(&work);
    result
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn findings_are_read_between_the_markers() {
        let dom = format!(
            "<pre id=\"out\">{BEGIN}\nimages 2\nlinks 3\nbroken image: file:///r/plots/a.svg\n{END}</pre>"
        );
        let c = parse_findings(&dom).expect("parsed");
        assert_eq!((c.images, c.links), (2, 3));
        assert_eq!(c.broken, ["image: file:///r/plots/a.svg"]);
        assert!(!c.ok());
        assert!(parse_findings("<pre>script did not run</pre>").is_err());
        let err = format!("{BEGIN}\nerror TypeError: d is null\n{END}");
        assert!(parse_findings(&err).is_err());
        let empty = parse_findings(&format!("{BEGIN}\nimages 0\nlinks 0\n{END}")).expect("parsed");
        assert!(!empty.ok(), "a page with nothing to check does not pass");
    }

    #[test]
    fn file_urls_escape_what_a_url_cannot_hold() {
        assert_eq!(
            file_url(Path::new("/tmp/my report/index#1.html")),
            "file:///tmp/my%20report/index%231.html"
        );
    }
}
