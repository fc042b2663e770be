//! Checks of the sphere-head constructor, the default adult head and the
//! TOML / JSON head descriptions.

use patchwise::head::{HeadError, HeadSpec, SphereHead};

#[test]
fn constructor_names_the_bad_value() {
    // Validation rules of the head model (task specification; common practice, no source).
    let err = SphereHead::new([0.0; 3], vec![0.08, 0.08], vec![0.3, 0.3]).unwrap_err();
    assert_eq!(
        err,
        HeadError::RadiusNotIncreasing {
            index: 1,
            value: 0.08,
            previous_index: 0,
            previous: 0.08
        }
    );
    assert!(err.to_string().contains("radius 1"));
    let err = SphereHead::new([0.0; 3], vec![-0.01], vec![0.3]).unwrap_err();
    assert!(matches!(err, HeadError::RadiusNotPositive { index: 0, .. }));
    let err = SphereHead::new([0.0; 3], vec![0.07, 0.08], vec![0.3, f64::NAN]).unwrap_err();
    assert!(matches!(
        err,
        HeadError::ConductivityNotPositive { index: 1, .. }
    ));
    let err = SphereHead::new([0.0; 3], vec![0.07, 0.08], vec![0.3, 0.0]).unwrap_err();
    assert!(matches!(
        err,
        HeadError::ConductivityNotPositive { index: 1, .. }
    ));
    let err = SphereHead::new([0.0; 3], vec![0.07, 0.08], vec![0.3]).unwrap_err();
    assert!(matches!(
        err,
        HeadError::LengthMismatch {
            radii: 2,
            conductivities: 1
        }
    ));
    let err = SphereHead::new([0.0; 3], vec![], vec![]).unwrap_err();
    assert!(matches!(err, HeadError::ShellCount { count: 0 }));
    let err =
        SphereHead::new([0.0; 3], vec![0.05, 0.06, 0.07, 0.08, 0.09], vec![0.3; 5]).unwrap_err();
    assert!(matches!(err, HeadError::ShellCount { count: 5 }));
    let err = SphereHead::new([0.0, f64::INFINITY, 0.0], vec![0.09], vec![0.3]).unwrap_err();
    assert!(matches!(err, HeadError::CenterNotFinite { axis: 1, .. }));
}

#[test]
fn default_adult_head_uses_the_cited_values() {
    // McCann et al. 2019 (Brain Topogr 32:825) means: grey matter 0.47,
    // skull 0.02, scalp 0.41 S/m; Baumann et al. 1997 (IEEE TBME 44:220): CSF
    // 1.79 S/m at 37 °C. Brain radius 81 mm: 3 mm clearance above a 78 mm
    // template cortex (task specification). Exact equality.
    let head = SphereHead::default_adult();
    assert_eq!(head.conductivities(), &[0.47, 1.79, 0.02, 0.41]);
    assert_eq!(head.radii(), &[0.081, 0.083, 0.088, 0.094]);
    assert_eq!(head.center(), [0.0; 3]);
    assert!(head.inner_radius() - 0.078 >= 0.003 - 1e-15);
    // The constructor accepts the same values.
    let again = SphereHead::new(
        [0.0; 3],
        head.radii().to_vec(),
        head.conductivities().to_vec(),
    )
    .unwrap();
    assert_eq!(again, head);
}

#[test]
fn asymptotic_factor_is_the_product_of_interface_ratios() {
    // f_∞ = Π 2σ_{k+1}/(σ_k + σ_{k+1}) (de Munck & Peters 1993, IEEE TBME
    // 40:1166); the series factors approach it (tolerance 1e-3 at n = 4096,
    // where f_n − f_∞ = O(1/n)).
    let head = SphereHead::default_adult();
    let s = head.conductivities();
    let expected = (0..3)
        .map(|k| 2.0 * s[k + 1] / (s[k] + s[k + 1]))
        .product::<f64>();
    assert!((head.asymptotic_factor() - expected).abs() < 1e-15);
    let far = head.series_factor(4096).unwrap();
    assert!((far - expected).abs() < 1e-3 * expected);
    assert!(head.series_factor(0).is_err());
}

#[test]
fn toml_head_file_parses_in_millimetres() {
    // File convention of docs/design.md: positions in mm, conductivities in S/m.
    let text = "model = \"spheres\"\ncenter_mm = [0.0, 1.0, 2.0]\nradii_mm = [80.0, 90.0]\nconductivities = [0.33, 0.01]\n";
    let spec = HeadSpec::from_toml_str(text, "head.toml").unwrap();
    let head = spec.to_head().unwrap();
    assert_eq!(head.radii(), &[0.08, 0.09]);
    assert_eq!(head.center(), [0.0, 0.001, 0.002]);
    // Without a centre: the origin.
    let text = "model = \"spheres\"\nradii_mm = [90.0]\nconductivities = [0.33]\n";
    let head = HeadSpec::from_toml_str(text, "head.toml")
        .unwrap()
        .to_head()
        .unwrap();
    assert_eq!(head.center(), [0.0; 3]);
}

#[test]
fn toml_errors_name_the_source_and_the_problem() {
    // deny_unknown_fields: an unknown key is an error naming it.
    let text =
        "model = \"spheres\"\nradii_mm = [90.0]\nconductivities = [0.33]\nskull_ratio = 15\n";
    let err = HeadSpec::from_toml_str(text, "my_head.toml").unwrap_err();
    let message = err.to_string();
    assert!(
        message.contains("my_head.toml") && message.contains("skull_ratio"),
        "{message}"
    );
    // An unknown model.
    let text = "model = \"boundary\"\nradii_mm = [90.0]\nconductivities = [0.33]\n";
    assert!(matches!(
        HeadSpec::from_toml_str(text, "h").unwrap_err(),
        HeadError::Parse { .. }
    ));
    // Decreasing radii: the invalid index is named.
    let text = "model = \"spheres\"\nradii_mm = [90.0, 85.0]\nconductivities = [0.33, 0.3]\n";
    let err = HeadSpec::from_toml_str(text, "h.toml").unwrap_err();
    let message = err.to_string();
    assert!(
        message.contains("h.toml") && message.contains("radius 1"),
        "{message}"
    );
    // Malformed TOML.
    assert!(HeadSpec::from_toml_str("model = ", "h.toml").is_err());
}

#[test]
fn head_model_json_has_the_documented_form_and_round_trips() {
    // The `head_model` attribute layout of the task specification.
    let head = SphereHead::new([0.0; 3], vec![0.08, 0.09], vec![0.33, 0.01]).unwrap();
    let json = head.head_model_json();
    assert_eq!(
        json,
        r#"{"model":"spheres","radii_mm":[80.0,90.0],"conductivities":[0.33,0.01],"center_mm":[0.0,0.0,0.0]}"#
    );
    let back = HeadSpec::from_json_str(&json, "attribute")
        .unwrap()
        .to_head()
        .unwrap();
    assert_eq!(back, head);
    assert!(HeadSpec::from_json_str(
        r#"{"model":"spheres","radii_mm":[90],"conductivities":[0.3],"extra":1}"#,
        "a"
    )
    .is_err());
}
