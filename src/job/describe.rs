//! What the user asked, in words: the (name, value) lines of summary.json's
//! job and of the report's "what was asked" table.

use super::params::AttributeParams;
use super::specs::LambdaRuleName;

impl AttributeParams {
    /// The parameters as (name, value) lines, in the order the report shows them; the names
    /// are identifiers (letters, digits, `_`) because they are summary.json's `job` keys.
    ///
    /// The entries come in the order of [`JOB_KEYS`], so the page of the
    /// run and the page `report DIR` remakes from summary.json agree.
    pub fn describe(&self) -> Vec<(String, String)> {
        let mut job = Vec::new();
        let mut put = |name: &str, value: String| job.push((name.to_string(), value));
        let inputs = &self.inputs;
        if let Some(d) = &inputs.decoder {
            put("decoder", d.display().to_string());
        }
        if let Some(p) = &inputs.patterns {
            put("patterns", p.display().to_string());
        }
        if let Some(c) = &inputs.channels {
            put("channel_labels", c.display().to_string());
        }
        match &inputs.dictionary {
            Some(d) => put("dictionary", format!("{} (given)", d.display())),
            None => {
                put("montage", self.forward.montage.to_string());
                put("sources", self.forward.sources.to_string());
                put("head", self.forward.head.to_string());
                if let Some(r) = &self.forward.regions {
                    put("regions", r.display().to_string());
                }
                let o = &self.patches;
                let radii: Vec<String> = o.radii_mm.iter().map(|r| format!("{r}")).collect();
                put(
                    "patches",
                    format!(
                        "radii {} mm, {} profile, {} orientation, seeds {}",
                        radii.join(", "),
                        o.profile,
                        o.atom_orientation,
                        o.spacing_mm
                            .map_or("at every source".to_string(), |s| format!("{s} mm apart"))
                    ),
                );
            }
        }
        let fit = &self.fit;
        put("reference", fit.reference.to_string());
        put(
            "noise_covariance",
            inputs
                .noise_covariance
                .as_ref()
                .map_or("none".to_string(), |p| p.display().to_string()),
        );
        put(
            "lambda_rule_asked",
            match (fit.lambda_ratio, fit.lambda) {
                (Some(r), _) => format!("\u{03bb} = {r} \u{00b7} \u{03bb}max"),
                (None, Some(l)) => format!("\u{03bb} = {l}"),
                (None, None) => match fit.lambda_rule {
                    LambdaRuleName::Noise => {
                        "noise rule: \u{03bb} = q\u{00b7}\u{03c3} (default)".to_string()
                    }
                    other => format!(
                        "minimum {} along the path",
                        other.to_string().to_uppercase()
                    ),
                },
            },
        );
        put(
            "stopping_rule",
            format!("relative duality gap \u{2264} {:e}", fit.tol),
        );
        put(
            "fit",
            if fit.joint {
                "joint".to_string()
            } else {
                "one component at a time".to_string()
            },
        );
        put(
            "resampling",
            if fit.resamples == 0 {
                "none".to_string()
            } else {
                format!("{} resamples, seed {}", fit.resamples, fit.seed)
            },
        );
        put(
            "refit",
            if fit.no_refit {
                "no".to_string()
            } else {
                "debiased least-squares refit".to_string()
            },
        );
        job
    }
}

/// The keys of a job record (summary.json's `job`), in the order the
/// report shows them: inputs, then the forward model, then the fit.
pub const JOB_KEYS: &[&str] = &[
    "decoder",
    "patterns",
    "channel_labels",
    "dictionary",
    "montage",
    "sources",
    "head",
    "regions",
    "patches",
    "reference",
    "noise_covariance",
    "lambda_rule_asked",
    "stopping_rule",
    "fit",
    "resampling",
    "refit",
];

/// A job record read back (from summary.json, whose object keeps no
/// order) in the order of [`JOB_KEYS`]; keys we do not know follow, in
/// the order given.
pub fn in_job_order(mut job: Vec<(String, String)>) -> Vec<(String, String)> {
    job.sort_by_key(|(k, _)| {
        JOB_KEYS
            .iter()
            .position(|known| known == k)
            .unwrap_or(JOB_KEYS.len())
    });
    job
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::path::PathBuf;

    /// Issue 22: summary.json's `job` keys are identifiers a script can index by.
    #[test]
    fn every_job_key_is_an_identifier() {
        let mut p = AttributeParams::default();
        p.inputs.decoder = Some(PathBuf::from("d.npz"));
        p.inputs.channels = Some(PathBuf::from("ch.txt"));
        p.inputs.noise_covariance = Some(PathBuf::from("noise.npy"));
        p.forward.regions = Some(PathBuf::from("labels.gii"));
        let keys: Vec<String> = p.describe().into_iter().map(|(k, _)| k).collect();
        assert!(keys.len() >= 12, "{keys:?}");
        // Issue 22, item 9: describe() gives the fixed order, so a record
        // read back and reordered is the record written.
        let mut shuffled = p.describe();
        shuffled.reverse();
        assert_eq!(in_job_order(shuffled), p.describe());
        for key in &keys {
            assert!(JOB_KEYS.contains(&key.as_str()), "{key} not in JOB_KEYS");
        }
        for key in &keys {
            let mut chars = key.chars();
            let first_ok = chars
                .next()
                .is_some_and(|c| c.is_ascii_alphabetic() || c == '_');
            assert!(
                first_ok && chars.all(|c| c.is_ascii_alphanumeric() || c == '_'),
                "summary.json job key {key:?} is not an identifier"
            );
        }
    }
}
