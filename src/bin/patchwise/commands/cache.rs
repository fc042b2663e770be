//! `patchwise cache`: list the cache's entries (kind, key, size, last use)
//! with their total, or clean them (all, by age, by kind, or the least
//! recently used down to a size). The listing and removal are
//! `patchwise::job::cache_folder`.

use std::path::PathBuf;
use std::time::SystemTime;

use patchwise::io::cache::default_cache_dir;
use patchwise::io::cache_entries::CacheEntry;
use patchwise::job::cache_folder::{
    cache_cap, clean, format_bytes, list, CleanParams, CAP_VARIABLE,
};

use crate::CliError;

/// Arguments of `patchwise cache`.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// The cache folder (default: $PATCHWISE_CACHE, else the user cache folder).
    #[arg(long, value_name = "DIR", global = true)]
    pub cache: Option<PathBuf>,
    #[command(subcommand)]
    pub action: Option<Action>,
}

/// What to do with the cache (without one: list it).
#[derive(clap::Subcommand, Debug)]
pub enum Action {
    /// List the entries, least recently used first, with their total size.
    List,
    /// Remove entries: all of them, or those older than --older-than, of a --kind, or the least recently used beyond --max-size. Entries a running job is using are left.
    Clean(CleanParams),
}

/// How long ago `t` was, in the largest whole unit.
fn age(t: SystemTime) -> String {
    let s = SystemTime::now()
        .duration_since(t)
        .unwrap_or_default()
        .as_secs();
    match s {
        0..60 => format!("{s} s ago"),
        60..3600 => format!("{} min ago", s / 60),
        3600..86_400 => format!("{} h ago", s / 3600),
        _ => format!("{} d ago", s / 86_400),
    }
}

fn total(entries: &[CacheEntry]) -> u64 {
    entries.iter().map(|e| e.bytes).sum()
}

/// Run `patchwise cache`.
pub fn exec(args: Args) -> Result<(), CliError> {
    let dir = args.cache.clone().unwrap_or_else(default_cache_dir);
    let cap = cache_cap()?;
    match args.action.unwrap_or(Action::List) {
        Action::List => {
            let entries = list(&dir)?;
            outln!("cache folder {}", dir.display());
            if !entries.is_empty() {
                outln!("  {:<10}  {:<24}  {:>10}  last use", "kind", "key", "size");
            }
            for e in &entries {
                outln!(
                    "  {:<10}  {:<24}  {:>10}  {}",
                    e.kind,
                    e.key,
                    format_bytes(e.bytes),
                    age(e.last_use)
                );
            }
            let cap = match cap {
                Some(c) => format!("cap {} ({CAP_VARIABLE})", format_bytes(c)),
                None => format!("no cap ({CAP_VARIABLE})"),
            };
            outln!(
                "{} entr{}, {}; {cap}",
                entries.len(),
                if entries.len() == 1 { "y" } else { "ies" },
                format_bytes(total(&entries))
            );
        }
        Action::Clean(params) => {
            let out = clean(&dir, &params)?;
            outln!(
                "removed {} entr{} ({}) from {}; {} left",
                out.removed.len(),
                if out.removed.len() == 1 { "y" } else { "ies" },
                format_bytes(out.bytes_removed()),
                dir.display(),
                format_bytes(out.bytes_left)
            );
            if out.temporaries > 0 {
                outln!(
                    "removed {} temporary file(s) of killed runs",
                    out.temporaries
                );
            }
            for e in &out.busy {
                outln!(
                    "left {} {} ({}): a running job is using it",
                    e.kind,
                    e.key,
                    format_bytes(e.bytes)
                );
            }
        }
    }
    Ok(())
}
