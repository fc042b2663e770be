//! Prepares the batch benchmark of docs/benchmarks.md: 50 invented subjects
//! with 2 decoders each (100 jobs) on the template-5k cortex, 64 channels,
//! default uncertainty (100 resamples). Writes DIR/decoders/*.h5 and
//! DIR/jobs.toml, then prints the command to time:
//!
//!     cargo run --release --example batch_bench -- /tmp/batch-bench
//!     /usr/bin/time -v target/release/patchwise batch /tmp/batch-bench/jobs.toml \
//!         --out /tmp/batch-bench/out --cache /tmp/batch-bench/cache --jobs 2
//!
//! `-- DIR N` makes N subjects instead of 50; `-- DIR N --compare` also
//! adds a `[compare]` table (paired: motor against visual decoders), the
//! README's cohort example.

use std::path::PathBuf;

use patchwise::io::{Dataset, Store};
use patchwise::montage::standard;

/// Scalp maps of focal sources stood in for by Gaussian bumps (40 mm wide)
/// over the electrode positions, two per decoder, at centres that move with
/// the subject so that no two decoders are equal.
fn patterns(positions: &[[f64; 3]], centres: &[[f64; 3]; 2]) -> Vec<f64> {
    let mut values = Vec::with_capacity(positions.len() * 2);
    for p in positions {
        for c in centres {
            let d2: f64 = (0..3).map(|a| (p[a] - c[a]).powi(2)).sum();
            values.push((-d2 / (2.0 * 0.04f64.powi(2))).exp() * 1e-6);
        }
    }
    values
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let dir = PathBuf::from(
        std::env::args()
            .nth(1)
            .unwrap_or_else(|| "/tmp/batch-bench".to_string()),
    );
    let subjects: usize = match std::env::args().nth(2) {
        Some(n) => n.parse()?,
        None => 50,
    };
    let with_compare = std::env::args().any(|a| a == "--compare");
    std::fs::create_dir_all(dir.join("decoders"))?;
    let full = standard("10-10", 0.1)?;
    let labels: Vec<String> = patchwise::demo::CHANNELS_64
        .iter()
        .map(|s| s.to_string())
        .collect();
    let montage = full.subset(&full.select(&labels)?);
    for s in 1..=subjects {
        let t = s as f64 * 0.37;
        let decoders = [
            (
                "motor",
                [
                    [-0.05 + 0.01 * t.sin(), 0.01 * t.cos(), 0.08],
                    [0.05, -0.01 + 0.01 * t.cos(), 0.08],
                ],
            ),
            (
                "visual",
                [
                    [0.01 * t.sin(), -0.08, 0.04 + 0.01 * t.cos()],
                    [0.0, 0.07, 0.03 + 0.005 * t.sin()],
                ],
            ),
        ];
        for (kind, centres) in decoders {
            let mut store = Store::new();
            store.insert("/channels", Dataset::strings(labels.clone()));
            store.insert(
                "/patterns",
                Dataset::f64(vec![64, 2], patterns(&montage.positions, &centres)),
            );
            store.write_atomic(&dir.join(format!("decoders/{s:02}-{kind}.h5")))?;
        }
    }
    // Jobs are named sub-<NN>-motor and sub-<NN>-visual (the glob rule
    // `<name>-<file stem>`), so the paired comparison can match them.
    let mut script = "[defaults]\nsources = \"template-5k\"\nmontage = \"10-10\"\n\n[[job]]\nname = \"sub\"\ndecoder = \"decoders/*.h5\"\n".to_string();
    if with_compare {
        script.push_str("\n[compare]\nout = \"group\"\npair = [\"motor\", \"visual\"]\n");
    }
    std::fs::write(dir.join("jobs.toml"), script)?;
    println!(
        "/usr/bin/time -v target/release/patchwise batch {0}/jobs.toml --out {0}/out --cache {0}/cache --jobs 2",
        dir.display()
    );
    Ok(())
}
