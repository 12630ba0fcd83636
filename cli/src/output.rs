//! Output directories that appear whole or not at all.
//!
//! Every file of a run is written into a hidden staging folder inside the
//! output directory and moved into place only once the run has succeeded, so
//! a failed run never leaves a half-written result behind.

use anyhow::{Context, Result};
use std::path::{Path, PathBuf};
use std::sync::Mutex;

/// A set of output files being written.
pub struct Staging {
    out: PathBuf,
    tmp: PathBuf,
    /// Files staged, in the order first asked for (shared by writers on
    /// several threads).
    files: Mutex<Vec<PathBuf>>,
    committed: bool,
}

impl Staging {
    /// Start writing into `out` (created if missing).
    pub fn new(out: &Path) -> Result<Staging> {
        std::fs::create_dir_all(out)
            .with_context(|| format!("cannot create output directory {}", out.display()))?;
        let tmp = out.join(format!(".fluxwright-partial-{}", std::process::id()));
        if tmp.exists() {
            std::fs::remove_dir_all(&tmp).ok();
        }
        std::fs::create_dir_all(&tmp)
            .with_context(|| format!("cannot write into output directory {}", out.display()))?;
        Ok(Staging {
            out: out.to_path_buf(),
            tmp,
            files: Mutex::new(Vec::new()),
            committed: false,
        })
    }

    /// The staging path of output file `name` (may contain `/`), for writers
    /// that want a path. The file is moved into place by [`Staging::commit`].
    pub fn path(&self, name: &str) -> Result<PathBuf> {
        let rel = PathBuf::from(name);
        let path = self.tmp.join(&rel);
        if let Some(parent) = path.parent() {
            std::fs::create_dir_all(parent)
                .with_context(|| format!("cannot create {}", parent.display()))?;
        }
        let mut files = self.files.lock().unwrap_or_else(|p| p.into_inner());
        if !files.contains(&rel) {
            files.push(rel);
        }
        Ok(path)
    }

    /// Write output file `name` with `bytes`.
    pub fn write(&self, name: &str, bytes: &[u8]) -> Result<()> {
        let path = self.path(name)?;
        std::fs::write(&path, bytes).with_context(|| format!("cannot write {}", path.display()))
    }

    /// Write output file `name` through a buffered writer handed to `body`
    /// (for large files that are never held whole in memory).
    pub fn write_with(
        &self,
        name: &str,
        body: impl FnOnce(&mut std::io::BufWriter<std::fs::File>) -> std::io::Result<()>,
    ) -> Result<()> {
        let path = self.path(name)?;
        let written = std::fs::File::create(&path).and_then(|f| {
            let mut w = std::io::BufWriter::with_capacity(1 << 20, f);
            body(&mut w)?;
            std::io::Write::flush(&mut w)
        });
        written.with_context(|| format!("cannot write {}", path.display()))
    }

    /// Move every staged file into the output directory, in the order
    /// written (so the summary file written last appears last).
    pub fn commit(mut self) -> Result<()> {
        let files = std::mem::take(self.files.get_mut().unwrap_or_else(|p| p.into_inner()));
        for rel in &files {
            let from = self.tmp.join(rel);
            let to = self.out.join(rel);
            if let Some(parent) = to.parent() {
                std::fs::create_dir_all(parent)
                    .with_context(|| format!("cannot create {}", parent.display()))?;
            }
            std::fs::rename(&from, &to)
                .with_context(|| format!("cannot move {} into place", to.display()))?;
        }
        self.committed = true;
        std::fs::remove_dir_all(&self.tmp).ok();
        Ok(())
    }
}

impl Drop for Staging {
    fn drop(&mut self) {
        if !self.committed {
            std::fs::remove_dir_all(&self.tmp).ok();
        }
    }
}
