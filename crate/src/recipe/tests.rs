use super::*;

const FULL: &str = r#"{
  "format": "sillage-recipe",
  "version": 1,
  "cleaning": {"threshold": 2.0},
  "modes": {"method": "pod", "rank": 6},
  "model": "mean + pod(1-2)",
  "perturbation": "pod(3-4)",
  "transport": {"t0": 0.0, "horizon": 0.5, "grid": [50, 20], "step": 0.01},
  "sensitivity": {"epsilon": 0.001},
  "exports": [{"what": "sensitivity", "file": "s.npz"}, {"what": "ridges", "file": "r.json"}],
  "view": {"quantity": "zeta"}
}"#;

#[test]
fn full_recipe_round_trips() {
    let r = Recipe::from_json(FULL).unwrap();
    assert_eq!(r.cleaning.unwrap().passes, 3);
    assert_eq!(r.exports.len(), 2);
    let again = Recipe::from_json(&r.to_json()).unwrap();
    assert_eq!(again, r);
}

#[test]
fn mistakes_are_named() {
    let cases = [
        (FULL.replace("\"version\": 1", "\"version\": 7"), "version 7"),
        (FULL.replace("sillage-recipe", "other"), "'format'"),
        (FULL.replace("\"model\"", "\"modle\""), "unknown field `modle`"),
        (FULL.replace("pod(3-4)", "pod(3-"), "'perturbation'"),
        (FULL.replace("\"epsilon\": 0.001", "\"epsilon\": -1"), "sensitivity.epsilon"),
        (FULL.replace("s.npz", "s.txt"), "must end in .npz or .vti"),
        (FULL.replace("s.npz", "../s.npz"), "relative path"),
        (FULL.replace("\"threshold\": 2.0", "\"threshold\": 0"), "cleaning.threshold"),
    ];
    for (text, want) in cases {
        let e = Recipe::from_json(&text).unwrap_err().to_string();
        assert!(e.contains(want), "expected '{want}' in: {e}");
    }
    let no_g = FULL.replace("\"perturbation\": \"pod(3-4)\",", "");
    assert!(Recipe::from_json(&no_g).unwrap_err().to_string().contains("perturbation"));
}
