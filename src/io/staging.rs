//! Output folders that appear whole or not at all, and never replace a
//! folder patchwise did not write.
//!
//! Files are written into a hidden sibling folder, a temporary of the target
//! in the sense of `io::atomic` (`.<name>.<host>.<pid>.<n>.tmp`). `commit`
//! then swaps it in: a missing target is created by one rename; an existing
//! target that is ours (see [`check_output_folder`]) is renamed aside, the
//! staged folder renamed into its place, and the old one removed. A target
//! holding anything else is refused with exit 2, before any computing when
//! the command checks it first, and again at the commit. A failure before
//! `commit` removes the staging folder; the staging folders of killed runs
//! are removed by the next run that stages the same target.

use std::fs;
use std::path::{Component, Path, PathBuf};

use super::atomic::{remove_dead_temporaries, temporary_path};

/// Why an output could not be staged or committed.
#[derive(Debug, thiserror::Error)]
pub enum StagingError {
    /// The output path is refused (it would replace something that is not
    /// ours, or an input, or cannot be a folder): bad input.
    #[error("{0}")]
    Refused(String),
    /// A file-system operation failed while writing.
    #[error("{context}: {source}")]
    Io {
        /// What was being done.
        context: String,
        /// The cause.
        #[source]
        source: std::io::Error,
    },
}

impl StagingError {
    /// Whether the output was refused (bad input) rather than failing.
    pub fn is_refusal(&self) -> bool {
        matches!(self, StagingError::Refused(_))
    }
}

fn io_error(context: String) -> impl FnOnce(std::io::Error) -> StagingError {
    move |source| StagingError::Io { context, source }
}

/// Every file name a patchwise output folder holds (result folders,
/// comparison folders, batch job folders, the demo's folder).
pub const OUR_FILES: &[&str] = &[
    "result.h5",
    "regions.csv",
    "filter_gain.csv",
    "regions_time.csv",
    "time_ranges.csv",
    "summary.json",
    "report.html",
    "dipoles.csv",
    "compare.h5",
    "similarity.csv",
    "paired.csv",
    "job.json",
    "decoder.h5",
];

/// Folders an output folder of ours may hold, each itself an output folder
/// of ours (the demo's time-resolved decoder).
pub const OUR_FOLDERS: &[&str] = &["time-resolved"];

/// Files at least one of which every output folder of ours holds.
const SIGNATURES: &[&str] = &["result.h5", "summary.json", "compare.h5", "job.json"];

/// The longest name of one path component, and of a whole path (Linux's
/// NAME_MAX and PATH_MAX less the terminating byte).
const NAME_MAX: usize = 255;
const PATH_MAX: usize = 4095;

fn bad(message: String) -> StagingError {
    StagingError::Refused(message)
}

/// `path` made absolute with its existing part resolved (links, `.`, `..`)
/// and the part that does not exist yet appended as written. Two spellings
/// of one place give the same path.
pub fn resolved(path: &Path) -> PathBuf {
    let absolute = std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf());
    let mut existing = absolute.as_path();
    let mut tail = Vec::new();
    loop {
        if let Ok(canonical) = fs::canonicalize(existing) {
            let mut out = canonical;
            for part in tail.iter().rev() {
                match part {
                    Component::ParentDir => {
                        out.pop();
                    }
                    Component::CurDir => {}
                    other => out.push(other.as_os_str()),
                }
            }
            return out;
        }
        match (existing.parent(), existing.components().next_back()) {
            (Some(parent), Some(last)) => {
                tail.push(last);
                existing = parent;
            }
            _ => return absolute,
        }
    }
}

/// A name too long for the file system, refused before computing.
fn check_length(path: &Path, flag: &str) -> Result<(), StagingError> {
    if path.as_os_str().len() > PATH_MAX {
        return Err(bad(format!(
            "{flag} {}…: the path is {} bytes long; expected at most {PATH_MAX}",
            path.display()
                .to_string()
                .chars()
                .take(60)
                .collect::<String>(),
            path.as_os_str().len()
        )));
    }
    if let Some(long) = path.components().find(|c| c.as_os_str().len() > NAME_MAX) {
        return Err(bad(format!(
            "{flag} {}: the name {}… is {} bytes long; expected at most {NAME_MAX}",
            path.display(),
            long.as_os_str()
                .to_string_lossy()
                .chars()
                .take(40)
                .collect::<String>(),
            long.as_os_str().len()
        )));
    }
    Ok(())
}

/// The nearest existing ancestor of a path that does not exist must be a
/// folder (a file there makes the path impossible).
fn check_ancestors(path: &Path, flag: &str) -> Result<(), StagingError> {
    let absolute = std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf());
    for ancestor in absolute.ancestors().skip(1) {
        match fs::metadata(ancestor) {
            Ok(m) if m.is_dir() => return Ok(()),
            Ok(_) => {
                return Err(bad(format!(
                    "{flag} {}: {} is a file, not a folder",
                    path.display(),
                    ancestor.display()
                )))
            }
            Err(_) => continue,
        }
    }
    Ok(())
}

/// What a path is, in a message.
fn kind(meta: &fs::Metadata) -> &'static str {
    use std::os::unix::fs::FileTypeExt;
    let t = meta.file_type();
    if t.is_dir() {
        "a folder"
    } else if t.is_file() {
        "a file"
    } else if t.is_char_device() || t.is_block_device() {
        "a device"
    } else if t.is_fifo() {
        "a pipe"
    } else if t.is_socket() {
        "a socket"
    } else {
        "not a regular file"
    }
}

/// The entries of the existing folder `dir` that keep it from being ours:
/// anything but a regular file named in [`OUR_FILES`] or a folder named in
/// [`OUR_FOLDERS`] that is itself ours (its own foreign entries are listed
/// as `name/entry`); and, when no
/// [`SIGNATURES`] file is there, every entry. The temporaries that killed
/// writers of our files left (`.report.html.<host>.<pid>.<n>.tmp` of a
/// killed `report`) are removed first: they are ours and would otherwise
/// block every rerun until removed by hand. Those of live processes and of
/// other machines stay, and count as foreign.
pub fn foreign_entries(dir: &Path) -> std::io::Result<Vec<String>> {
    for name in OUR_FILES {
        remove_dead_temporaries(dir, Some(name));
    }
    let mut foreign = Vec::new();
    let mut names = Vec::new();
    for entry in fs::read_dir(dir)? {
        let entry = entry?;
        let name = entry.file_name().to_string_lossy().into_owned();
        let is_file = entry.file_type().is_ok_and(|t| t.is_file());
        let is_dir = entry.file_type().is_ok_and(|t| t.is_dir());
        if is_file && OUR_FILES.contains(&name.as_str()) {
            names.push(name);
        } else if is_dir && OUR_FOLDERS.contains(&name.as_str()) {
            let inner = foreign_entries(&entry.path())?;
            foreign.extend(inner.into_iter().map(|e| format!("{name}/{e}")));
        } else if is_dir {
            foreign.push(format!("{name}/"));
        } else {
            foreign.push(name);
        }
    }
    if !names.is_empty() && !names.iter().any(|n| SIGNATURES.contains(&n.as_str())) {
        foreign.append(&mut names);
    }
    foreign.sort();
    Ok(foreign)
}

/// Check a path meant for a folder before computing: a name the file
/// system takes, an existing folder or a path that can become one (no file
/// among its ancestors, not a file, device or pipe itself).
pub fn check_folder_path(path: &Path, flag: &str) -> Result<(), StagingError> {
    check_length(path, flag)?;
    match fs::metadata(path) {
        Err(_) => check_ancestors(path, flag),
        Ok(meta) if !meta.is_dir() => Err(bad(format!(
            "{flag} {}: this is {}; expected a folder",
            path.display(),
            kind(&meta)
        ))),
        Ok(_) => Ok(()),
    }
}

/// Check an output folder before computing: a path that can be a folder,
/// and, when it exists, a folder that is empty or ours (only files
/// patchwise writes, at least one of result.h5, summary.json, compare.h5,
/// job.json), so that replacing it loses nothing of the user's.
pub fn check_output_folder(path: &Path, flag: &str) -> Result<(), StagingError> {
    check_folder_path(path, flag)?;
    match fs::metadata(path) {
        Err(_) => Ok(()),
        Ok(_) => {
            let foreign = foreign_entries(path)
                .map_err(|e| bad(format!("{flag} {}: {e}", path.display())))?;
            if foreign.is_empty() {
                return Ok(());
            }
            let shown: Vec<&str> = foreign.iter().take(5).map(String::as_str).collect();
            Err(bad(format!(
                "{flag} {}: the folder holds {} entr{} patchwise did not write ({}{}); it would be replaced as a whole, so give a new or empty folder",
                path.display(),
                foreign.len(),
                if foreign.len() == 1 { "y" } else { "ies" },
                shown.join(", "),
                if foreign.len() > shown.len() { ", …" } else { "" }
            )))
        }
    }
}

/// Check an output file before computing: a name the file system takes, in
/// an existing folder, and not a folder, device or pipe already.
pub fn check_output_file(path: &Path, flag: &str) -> Result<(), StagingError> {
    check_length(path, flag)?;
    if path.file_name().is_none() {
        return Err(bad(format!(
            "{flag} {}: expected a file name",
            path.display()
        )));
    }
    match fs::metadata(path) {
        Ok(meta) if !meta.is_file() => Err(bad(format!(
            "{flag} {}: this is {}; expected a file",
            path.display(),
            kind(&meta)
        ))),
        Ok(_) => Ok(()),
        Err(_) => {
            let parent = path
                .parent()
                .filter(|p| !p.as_os_str().is_empty())
                .unwrap_or(Path::new("."));
            match fs::metadata(parent) {
                Ok(m) if m.is_dir() => Ok(()),
                Ok(m) => Err(bad(format!(
                    "{flag} {}: {} is {}, not a folder",
                    path.display(),
                    parent.display(),
                    kind(&m)
                ))),
                Err(_) => Err(bad(format!(
                    "{flag} {}: the folder {} does not exist",
                    path.display(),
                    parent.display()
                ))),
            }
        }
    }
}

/// Refuse inputs that the output would replace: with `replaced` `None` the
/// whole folder `out` is replaced, so no input may lie inside it (nor may
/// `out` lie inside an input folder, or equal it); with a list, the inputs
/// named `out/<name>` for those names. Paths are compared resolved, so two
/// spellings of one file are one file.
pub fn refuse_replaced_inputs(
    out: &Path,
    flag: &str,
    replaced: Option<&[&str]>,
    inputs: &[(&str, &Path)],
) -> Result<(), StagingError> {
    let out_resolved = resolved(out);
    for (what, input) in inputs {
        let input_resolved = resolved(input);
        let clash = match replaced {
            None => {
                input_resolved.starts_with(&out_resolved)
                    || (input.is_dir() && out_resolved.starts_with(&input_resolved))
            }
            Some(names) => names.iter().any(|n| out_resolved.join(n) == input_resolved),
        };
        if clash {
            return Err(bad(format!(
                "{flag} {}: the output would replace the {what} {} (an input of this run); give another {flag}",
                out.display(),
                input.display()
            )));
        }
    }
    Ok(())
}

/// Refuse an output file that is one of the inputs (resolved paths).
pub fn refuse_input_as_output(
    out: &Path,
    flag: &str,
    inputs: &[(&str, &Path)],
) -> Result<(), StagingError> {
    let out_resolved = resolved(out);
    for (what, input) in inputs {
        if resolved(input) == out_resolved {
            return Err(bad(format!(
                "{flag} {}: this is the {what} (an input of this run); writing it would replace it; give another {flag}",
                out.display()
            )));
        }
    }
    Ok(())
}

/// Copy the regular files of `from` missing in `to` into it, and, when
/// `with_folders`, the folders of ours ([`OUR_FOLDERS`]) with their files.
fn copy_missing(from: &Path, to: &Path, with_folders: bool) -> Result<(), StagingError> {
    let Ok(entries) = fs::read_dir(from) else {
        return Ok(());
    };
    for entry in entries.flatten() {
        let staged = to.join(entry.file_name());
        if staged.exists() {
            continue;
        }
        let kind = entry.file_type();
        if kind.as_ref().is_ok_and(|t| t.is_file()) {
            fs::copy(entry.path(), &staged)
                .map_err(io_error(format!("keeping {}", entry.path().display())))?;
        } else if with_folders
            && kind.is_ok_and(|t| t.is_dir())
            && OUR_FOLDERS.contains(&entry.file_name().to_string_lossy().as_ref())
        {
            fs::create_dir(&staged).map_err(io_error(format!("creating {}", staged.display())))?;
            copy_missing(&entry.path(), &staged, false)?;
        }
    }
    Ok(())
}

/// A staging folder for the output folder `target`.
pub struct Staging {
    /// The target as the user wrote it (for messages and the return value).
    shown: PathBuf,
    /// The target resolved (what is renamed).
    target: PathBuf,
    dir: PathBuf,
    committed: bool,
}

impl Staging {
    /// Create the staging folder beside `target`, after removing the
    /// staging folders that killed runs left for the same target.
    pub fn new(target_as_given: &Path) -> Result<Self, StagingError> {
        let target = resolved(target_as_given);
        let parent = target
            .parent()
            .filter(|p| !p.as_os_str().is_empty())
            .unwrap_or(Path::new("."))
            .to_path_buf();
        fs::create_dir_all(&parent).map_err(io_error(format!("creating {}", parent.display())))?;
        if let Some(name) = target.file_name() {
            remove_dead_temporaries(&parent, Some(&name.to_string_lossy()));
        }
        let dir = temporary_path(&target);
        fs::create_dir(&dir).map_err(io_error(format!("creating {}", dir.display())))?;
        Ok(Staging {
            shown: target_as_given.to_path_buf(),
            target,
            dir,
            committed: false,
        })
    }

    /// The path of a file inside the staging folder.
    pub fn file(&self, name: &str) -> PathBuf {
        self.dir.join(name)
    }

    /// The staging folder itself.
    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// Copy the files and the folders of ours ([`OUR_FOLDERS`]) of the
    /// existing target (ours) that are not staged yet into the staging
    /// folder, so that the commit keeps them: for commands that add files
    /// to a folder (`dipole` beside an attribution).
    pub fn keep_existing(&self) -> Result<(), StagingError> {
        copy_missing(&self.target, &self.dir, true)
    }

    /// Swap the staged folder in as the target: one rename when the target
    /// is missing; else (the target being ours) the old folder is renamed
    /// aside, the staged one into place, and the old one removed. Nothing
    /// of a stale earlier run survives beside the new files.
    pub fn commit(mut self) -> Result<PathBuf, StagingError> {
        let flag = "--out";
        if fs::symlink_metadata(&self.target).is_ok() {
            check_output_folder(&self.shown, flag)?;
            let aside = temporary_path(&self.target);
            fs::rename(&self.target, &aside).map_err(io_error(format!(
                "moving the earlier {} aside",
                self.target.display()
            )))?;
            if let Err(e) = fs::rename(&self.dir, &self.target) {
                // Put the earlier results back: the target never goes missing.
                let _ = fs::rename(&aside, &self.target);
                return Err(io_error(format!(
                    "moving results to {}",
                    self.target.display()
                ))(e));
            }
            let _ = fs::remove_dir_all(&aside);
        } else {
            fs::rename(&self.dir, &self.target).map_err(io_error(format!(
                "moving results to {}",
                self.target.display()
            )))?;
        }
        self.committed = true;
        Ok(self.shown.clone())
    }
}

impl Drop for Staging {
    fn drop(&mut self) {
        if !self.committed {
            let _ = fs::remove_dir_all(&self.dir);
        }
    }
}
