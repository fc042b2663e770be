//! The typed values of the options that name either a built-in or a file
//! (`--montage`, `--sources`, `--head`) and the small closed choices
//! (`--reference`, `--lambda-rule`, `--profile`, `--orientation`).
//! Each is parsed here once ([`FromStr`] for the command line and, through
//! `serde(try_from = "String")`, for job scripts and saved parameters) and
//! printed back as the user wrote it.

use std::fmt;
use std::path::PathBuf;
use std::str::FromStr;

use serde::{Deserialize, Serialize};

use crate::geometry::TemplateResolution;
use crate::montage::standard_names;

/// A spec that is a built-in name or a file path never fails to parse: an
/// unknown name is taken as a path and checked when the job reads it.
#[derive(Debug, thiserror::Error)]
#[error("{0}")]
pub struct SpecError(String);

/// Implements `Display`, `From<T> for String` and `TryFrom<String>` from the
/// type's `FromStr`, so serde reads and writes it as its text.
macro_rules! text_spec {
    ($t:ty) => {
        impl From<$t> for String {
            fn from(v: $t) -> String {
                v.to_string()
            }
        }
        impl TryFrom<String> for $t {
            type Error = SpecError;
            fn try_from(s: String) -> Result<Self, SpecError> {
                s.parse()
            }
        }
    };
}

/// `--montage`: a standard layout of the 10-20 system family, or an
/// electrodes file (BIDS-style TSV or CSV, positions in mm).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "String", into = "String")]
pub enum MontageSpec {
    /// A standard layout, as the user spelled it (`10-20`, `10-10`, `10-5`, or `10-05` for `10-5`).
    Standard(String),
    /// An electrodes file.
    File(PathBuf),
}

impl MontageSpec {
    /// Whether `name` is a standard layout (case-insensitive; `10-05` is `10-5`).
    pub fn is_standard_name(name: &str) -> bool {
        standard_names()
            .iter()
            .any(|n| n.eq_ignore_ascii_case(name))
            || name.eq_ignore_ascii_case("10-05")
    }
}

impl FromStr for MontageSpec {
    type Err = SpecError;
    fn from_str(s: &str) -> Result<Self, SpecError> {
        if s.trim().is_empty() {
            return Err(SpecError(format!(
                "an empty montage; expected a standard layout ({}) or an electrodes file",
                standard_names().join(", ")
            )));
        }
        Ok(if Self::is_standard_name(s) {
            MontageSpec::Standard(s.to_string())
        } else {
            MontageSpec::File(PathBuf::from(s))
        })
    }
}

impl fmt::Display for MontageSpec {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            MontageSpec::Standard(name) => f.write_str(name),
            MontageSpec::File(p) => write!(f, "{}", p.display()),
        }
    }
}
text_spec!(MontageSpec);

/// `--sources`: the embedded template cortex at one of its resolutions, or
/// a surface (GIFTI, PLY, OFF) or table (TSV/CSV, mm) file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "String", into = "String")]
pub enum SourcesSpec {
    /// The template cortex.
    Template(TemplateResolution),
    /// A file.
    File(PathBuf),
}

impl FromStr for SourcesSpec {
    type Err = SpecError;
    fn from_str(s: &str) -> Result<Self, SpecError> {
        if s.trim().is_empty() {
            return Err(SpecError(
                "empty sources; expected template, template-5k or a surface or table file"
                    .to_string(),
            ));
        }
        Ok(match TemplateResolution::from_name(s) {
            Some(r) => SourcesSpec::Template(r),
            None => SourcesSpec::File(PathBuf::from(s)),
        })
    }
}

impl fmt::Display for SourcesSpec {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            SourcesSpec::Template(r) => f.write_str(r.name()),
            SourcesSpec::File(p) => write!(f, "{}", p.display()),
        }
    }
}
text_spec!(SourcesSpec);

/// `--head`: the default four-shell head, the template boundary-element
/// head, or a head TOML file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "String", into = "String")]
pub enum HeadChoice {
    /// The default adult head (four concentric shells).
    Default,
    /// The template head of our own (`template-bem`): three surfaces built
    /// around the template cortex, by the boundary-element method.
    TemplateBem,
    /// A head TOML file.
    File(PathBuf),
}

impl FromStr for HeadChoice {
    type Err = SpecError;
    fn from_str(s: &str) -> Result<Self, SpecError> {
        if s.trim().is_empty() {
            return Err(SpecError(
                "an empty head; expected default, template-bem or a head TOML file".to_string(),
            ));
        }
        Ok(if s == "default" {
            HeadChoice::Default
        } else if s == crate::head::template_head::TEMPLATE_BEM_NAME {
            HeadChoice::TemplateBem
        } else {
            HeadChoice::File(PathBuf::from(s))
        })
    }
}

impl fmt::Display for HeadChoice {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            HeadChoice::Default => f.write_str("default"),
            HeadChoice::TemplateBem => f.write_str(crate::head::template_head::TEMPLATE_BEM_NAME),
            HeadChoice::File(p) => write!(f, "{}", p.display()),
        }
    }
}
text_spec!(HeadChoice);

/// Declares a closed choice: a `clap::ValueEnum` (help lists the values),
/// serde as the lower-case name, and `Display` as the same name.
macro_rules! choice {
    ($(#[$meta:meta])* $name:ident { $($(#[doc = $doc:literal])* $variant:ident = $text:literal,)* }) => {
        $(#[$meta])*
        #[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum, Serialize, Deserialize)]
        pub enum $name {
            $($(#[doc = $doc])* #[value(name = $text)] #[serde(rename = $text)] $variant,)*
        }
        impl fmt::Display for $name {
            fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str(match self { $($name::$variant => $text,)* })
            }
        }
        impl FromStr for $name {
            type Err = SpecError;
            fn from_str(s: &str) -> Result<Self, SpecError> {
                match s {
                    $($text => Ok($name::$variant),)*
                    _ => Err(SpecError(format!(
                        "{s:?}: expected one of {}",
                        [$($text),*].join(", ")
                    ))),
                }
            }
        }
    };
}

choice! {
    /// `--reference`: the reference the fit works in.
    Reference {
        /// Patterns and atoms re-referenced to the common average.
        Average = "average",
        /// Both used as given.
        None = "none",
    }
}

choice! {
    /// `--lambda-rule`: how λ is chosen when neither `--lambda` nor
    /// `--lambda-ratio` fixes it.
    LambdaRuleName {
        /// λ = q σ (the noise rule, `pipeline::noise_rule`).
        Noise = "noise",
        /// Minimum of the Bayesian information criterion along the path.
        Bic = "bic",
        /// Minimum of Akaike's criterion along the path.
        Aic = "aic",
        /// Minimum of generalised cross-validation along the path.
        Gcv = "gcv",
    }
}

choice! {
    /// `--profile`: the patch profile over geodesic distance.
    ProfileChoice {
        /// Gaussian in geodesic distance (sigma = radius / 2), cut at the radius.
        Gaussian = "gaussian",
        /// Uniform within the radius.
        Flat = "flat",
    }
}

choice! {
    /// `--orientation`: one atom per patch along the normals, or three.
    OrientationChoice {
        /// One atom per patch, along the normals.
        Normal = "normal",
        /// Three atoms per patch (x, y, z) in one group; needs a free-orientation lead field.
        Free = "free",
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    // Each spec prints back as written, so job records and reports show
    // the user's own words (common practice, no source).
    #[test]
    fn specs_round_trip_through_text() {
        for s in ["10-20", "10-5", "10-05", "my/electrodes.tsv"] {
            assert_eq!(s.parse::<MontageSpec>().unwrap().to_string(), s);
        }
        assert_eq!(
            "template-5k".parse::<SourcesSpec>().unwrap(),
            SourcesSpec::Template(TemplateResolution::Low)
        );
        assert!(matches!(
            "cortex.surf.gii".parse::<SourcesSpec>().unwrap(),
            SourcesSpec::File(_)
        ));
        assert_eq!(
            "default".parse::<HeadChoice>().unwrap(),
            HeadChoice::Default
        );
        assert!("".parse::<HeadChoice>().is_err());
        assert_eq!(
            "template-bem".parse::<HeadChoice>().unwrap(),
            HeadChoice::TemplateBem
        );
        assert_eq!(HeadChoice::TemplateBem.to_string(), "template-bem");
        assert_eq!(
            "bic".parse::<LambdaRuleName>().unwrap(),
            LambdaRuleName::Bic
        );
        assert!("BIC".parse::<LambdaRuleName>().is_err());
        assert_eq!(Reference::None.to_string(), "none");
        let json = serde_json::to_string(&MontageSpec::Standard("10-10".into())).unwrap();
        assert_eq!(json, "\"10-10\"");
        let back: SourcesSpec = serde_json::from_str("\"template\"").unwrap();
        assert_eq!(back, SourcesSpec::Template(TemplateResolution::Standard));
    }
}
