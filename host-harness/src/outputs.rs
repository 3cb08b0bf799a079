//! Output folders of a command (`--csv`, `--plot`, `--junit`, `demo --out`): checked before
//! any work, written into a staging folder, moved into place only when everything was written.
//!
//! [`Staged::prepare`] creates the target folder (and the parents it lacks) and a hidden
//! staging folder inside it, so a path that cannot be written is an error naming the flag
//! before anything runs. Files are written into the staging folder; [`Staged::commit`] renames
//! each into the target folder (a rename within one folder: it does not fail half-way for
//! lack of space). A `Staged` dropped without a commit (an error, a failed property does not
//! count) removes its staging folder and the folders it created, so a failed command leaves
//! no partial set of files behind.

use std::fs;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use crate::input_error::InputError;

/// One output folder being written.
#[derive(Debug)]
pub struct Staged {
    flag: &'static str,
    dir: PathBuf,
    stage: PathBuf,
    /// Folders this command created (outermost first), removed again if it fails.
    created: Vec<PathBuf>,
    /// Files written, relative to the folder.
    files: Vec<PathBuf>,
    committed: bool,
}

fn err(flag: &str, what: &str, p: &Path, e: &std::io::Error) -> InputError {
    InputError(format!("{flag} {}: cannot {what}: {e}", p.display()))
}

/// Creates `dir` and its missing parents; returns those it created, outermost first.
fn create_dirs(flag: &str, dir: &Path) -> Result<Vec<PathBuf>, InputError> {
    if dir.as_os_str().is_empty() {
        return Err(InputError(format!("{flag}: the path is empty")));
    }
    if dir.exists() && !dir.is_dir() {
        return Err(InputError(format!(
            "{flag} {}: exists and is not a folder",
            dir.display()
        )));
    }
    let mut missing: Vec<PathBuf> = dir
        .ancestors()
        .filter(|a| !a.as_os_str().is_empty() && !a.exists())
        .map(Path::to_path_buf)
        .collect();
    missing.reverse();
    fs::create_dir_all(dir).map_err(|e| err(flag, "create the folder", dir, &e))?;
    Ok(missing)
}

impl Staged {
    /// Checks that `dir` can be written (creating it if needed) and opens a staging folder in
    /// it; `flag` is the option the user gave, for messages.
    ///
    /// # Errors
    ///
    /// `dir` is a file, or it cannot be created or written.
    pub fn prepare(flag: &'static str, dir: &Path) -> Result<Staged, InputError> {
        let created = create_dirs(flag, dir)?;
        let stage = dir.join(format!(
            ".lenz-staging-{}-{}",
            flag.trim_start_matches('-'),
            std::process::id()
        ));
        let s = Staged {
            flag,
            dir: dir.to_path_buf(),
            stage,
            created,
            files: Vec::new(),
            committed: false,
        };
        // A leftover of a killed run with the same process id is ours to replace.
        let _ = fs::remove_dir_all(&s.stage);
        fs::create_dir(&s.stage).map_err(|e| err(flag, "write into the folder", &s.dir, &e))?;
        Ok(s)
    }

    /// Checks that sub-folder `sub` of the target can be made (creating it now).
    ///
    /// # Errors
    ///
    /// It is a file or cannot be created.
    pub fn sub_folder(&mut self, sub: &str) -> Result<(), InputError> {
        let d = self.dir.join(sub);
        let made = create_dirs(self.flag, &d)?;
        self.created.extend(made);
        fs::create_dir_all(self.stage.join(sub))
            .map_err(|e| err(self.flag, "write into the folder", &self.dir, &e))
    }

    /// Checks that file `name` (relative to the folder) could be put in place.
    ///
    /// # Errors
    ///
    /// A folder of that name is in the way.
    pub fn check_name(&self, name: &Path) -> Result<(), InputError> {
        let target = self.dir.join(name);
        if target.is_dir() {
            return Err(InputError(format!(
                "{} {}: a folder is in the way of {}",
                self.flag,
                self.dir.display(),
                target.display()
            )));
        }
        Ok(())
    }

    /// Writes file `name` (relative to the folder) with `write`.
    ///
    /// # Errors
    ///
    /// The file cannot be written (named with the flag), or `write` fails.
    pub fn write_with(
        &mut self,
        name: &str,
        write: impl FnOnce(&mut BufWriter<fs::File>) -> std::io::Result<()>,
    ) -> Result<(), InputError> {
        let rel = PathBuf::from(name);
        self.check_name(&rel)?;
        let p = self.stage.join(&rel);
        let target = self.dir.join(&rel);
        let f = fs::File::create(&p).map_err(|e| err(self.flag, "write", &target, &e))?;
        let mut w = BufWriter::new(f);
        write(&mut w)
            .and_then(|()| w.flush())
            .map_err(|e| err(self.flag, "write", &target, &e))?;
        self.files.push(rel);
        Ok(())
    }

    /// Writes file `name` with the text `text`.
    ///
    /// # Errors
    ///
    /// As [`Staged::write_with`].
    pub fn write(&mut self, name: &str, text: &str) -> Result<(), InputError> {
        self.write_with(name, |w| w.write_all(text.as_bytes()))
    }

    /// Moves every written file into place; returns their paths.
    ///
    /// # Errors
    ///
    /// A rename failed (the files not yet moved are removed).
    pub fn commit(mut self) -> Result<Vec<PathBuf>, InputError> {
        let mut done = Vec::with_capacity(self.files.len());
        for rel in &self.files {
            let target = self.dir.join(rel);
            fs::rename(self.stage.join(rel), &target)
                .map_err(|e| err(self.flag, "write", &target, &e))?;
            done.push(target);
        }
        self.committed = true;
        let _ = fs::remove_dir_all(&self.stage);
        Ok(done)
    }
}

impl Drop for Staged {
    fn drop(&mut self) {
        if self.committed {
            return;
        }
        let _ = fs::remove_dir_all(&self.stage);
        // Innermost first; a folder that holds something (the user's) stays.
        for d in self.created.iter().rev() {
            let _ = fs::remove_dir(d);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tmp(name: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("lenz-outputs-{}-{name}", std::process::id()));
        let _ = fs::remove_dir_all(&d);
        d
    }

    #[test]
    fn committed_files_land_and_the_staging_folder_goes() {
        let d = tmp("commit");
        let mut s = Staged::prepare("--csv", &d.join("a/b")).expect("prepare");
        s.write("x.csv", "1\n").expect("write");
        let files = s.commit().expect("commit");
        assert_eq!(files, vec![d.join("a/b/x.csv")]);
        assert_eq!(
            fs::read_to_string(d.join("a/b/x.csv")).ok().as_deref(),
            Some("1\n")
        );
        assert_eq!(
            fs::read_dir(d.join("a/b")).map(Iterator::count).ok(),
            Some(1)
        );
        let _ = fs::remove_dir_all(&d);
    }

    #[test]
    fn a_dropped_stage_leaves_nothing() {
        let d = tmp("drop");
        fs::create_dir_all(&d).expect("base");
        {
            let mut s = Staged::prepare("--plot", &d.join("new/deeper")).expect("prepare");
            s.write("x.svg", "<svg/>").expect("write");
        }
        assert_eq!(fs::read_dir(&d).map(Iterator::count).ok(), Some(0));
        let _ = fs::remove_dir_all(&d);
    }

    #[test]
    fn a_file_in_the_way_names_the_flag() {
        let d = tmp("file");
        fs::create_dir_all(&d).expect("base");
        fs::write(d.join("afile"), "x").expect("file");
        let e = Staged::prepare("--out", &d.join("afile")).expect_err("a file");
        assert!(e.0.starts_with("--out "), "{e}");
        assert!(e.0.contains("not a folder"), "{e}");
        let e = Staged::prepare("--csv", Path::new("")).expect_err("empty");
        assert_eq!(e.0, "--csv: the path is empty");
        let _ = fs::remove_dir_all(&d);
    }
}
