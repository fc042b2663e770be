//! Output folders that appear whole or not at all.
//!
//! Files are written into a hidden sibling folder; `commit` then renames it
//! to the target (or moves each file into an existing target). A failure
//! before `commit` removes the staging folder, so the target never holds a
//! partial result.

use std::fs;
use std::path::{Path, PathBuf};

use anyhow::Context;

/// A staging folder for the output folder `target`.
pub struct Staging {
    target: PathBuf,
    dir: PathBuf,
    committed: bool,
}

impl Staging {
    /// Create the staging folder beside `target`.
    pub fn new(target: &Path) -> anyhow::Result<Self> {
        let parent = target
            .parent()
            .filter(|p| !p.as_os_str().is_empty())
            .unwrap_or(Path::new("."));
        fs::create_dir_all(parent).with_context(|| format!("creating {}", parent.display()))?;
        let name = target
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_else(|| "out".to_string());
        let dir = parent.join(format!(".{name}.partial-{}", std::process::id()));
        let _ = fs::remove_dir_all(&dir);
        fs::create_dir_all(&dir).with_context(|| format!("creating {}", dir.display()))?;
        Ok(Staging {
            target: target.to_path_buf(),
            dir,
            committed: false,
        })
    }

    /// The path of a file inside the staging folder.
    pub fn file(&self, name: &str) -> PathBuf {
        self.dir.join(name)
    }

    /// Move the staged files into the target folder.
    pub fn commit(mut self) -> anyhow::Result<PathBuf> {
        if !self.target.exists() {
            fs::rename(&self.dir, &self.target)
                .with_context(|| format!("moving results to {}", self.target.display()))?;
        } else {
            for entry in fs::read_dir(&self.dir)? {
                let entry = entry?;
                let dest = self.target.join(entry.file_name());
                fs::rename(entry.path(), &dest)
                    .with_context(|| format!("moving {}", dest.display()))?;
            }
            let _ = fs::remove_dir_all(&self.dir);
        }
        self.committed = true;
        Ok(self.target.clone())
    }
}

impl Drop for Staging {
    fn drop(&mut self) {
        if !self.committed {
            let _ = fs::remove_dir_all(&self.dir);
        }
    }
}
