//! `patchwise figure`: each figure of a result folder written at the asked
//! size, PNGs with the asked resolution in their pHYs chunk, SVGs that
//! parse at their stated size, a caption beside each, and bad requests
//! refused with exit 2 and nothing written.

use std::path::{Path, PathBuf};
use std::sync::OnceLock;

use crate::support;
use crate::support::cli::patchwise;
use crate::support::render::parse_svg;

fn demo() -> &'static PathBuf {
    static DIR: OnceLock<PathBuf> = OnceLock::new();
    DIR.get_or_init(|| support::report::demo_result(&support::scratch("figure_export")))
}

fn run(args: &[&str], cwd: &Path) -> std::process::Output {
    let mut all = vec!["figure", demo().to_str().unwrap()];
    all.extend_from_slice(args);
    patchwise(&all, cwd)
}

/// pHYs: pixels per unit along x and y, and the unit (1 = metre).
type Phys = (u32, u32, u8);

/// The PNG's IHDR width and height and its pHYs chunk (PNG, ISO/IEC
/// 15948:2004, 11.2.2 and 11.3.5.3: big-endian u32 fields).
fn png_header(bytes: &[u8]) -> ((u32, u32), Option<Phys>) {
    assert!(bytes.starts_with(b"\x89PNG\r\n\x1a\n"), "not a PNG");
    let be = |b: &[u8]| u32::from_be_bytes([b[0], b[1], b[2], b[3]]);
    let size = (be(&bytes[16..20]), be(&bytes[20..24]));
    let phys = bytes
        .windows(4)
        .position(|w| w == b"pHYs")
        .map(|i| (be(&bytes[i + 4..]), be(&bytes[i + 8..]), bytes[i + 12]));
    (size, phys)
}

#[test]
fn every_figure_is_written_at_the_asked_size_with_a_caption() {
    let dir = support::scratch("figure_export_out");
    for (kind, format) in [
        ("cortex", "png"),
        ("cortex", "svg"),
        ("gain", "png"),
        ("gain", "svg"),
        ("scalp", "png"),
        ("scalp", "svg"),
        ("shares", "svg"),
        ("path", "svg"),
    ] {
        let out = dir.join(format!("{kind}.{format}"));
        let o = run(
            &[
                "--kind",
                kind,
                "--component",
                "2",
                "--width",
                "1500",
                "--dpi",
                "600",
                "--out",
                out.to_str().unwrap(),
            ],
            &dir,
        );
        assert!(
            o.status.success(),
            "{kind}.{format}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        let bytes = std::fs::read(&out).unwrap();
        if format == "png" {
            let ((w, _), phys) = png_header(&bytes);
            assert_eq!(w, 1500, "{kind}.png width");
            // 600 dpi = 600 / 0.0254 = 23 622.05 pixels per metre, unit 1
            // (metre), rounded (PNG 11.3.5.3).
            assert_eq!(phys, Some((23_622, 23_622, 1)), "{kind}.png pHYs");
        } else {
            let text = String::from_utf8(bytes).unwrap();
            let w: u32 = text
                .split("width=\"")
                .nth(1)
                .and_then(|s| s.split('"').next())
                .and_then(|s| s.parse().ok())
                .unwrap();
            assert_eq!(w, 1500, "{kind}.svg width");
            let h: u32 = text
                .split("height=\"")
                .nth(1)
                .and_then(|s| s.split('"').next())
                .and_then(|s| s.parse().ok())
                .unwrap();
            parse_svg(&text, w, h);
        }
        let caption = std::fs::read_to_string(dir.join(format!("{kind}.caption.txt"))).unwrap();
        assert!(caption.contains("left-hand imagery"), "{kind}: {caption}");
        assert!(caption.contains("not for clinical decisions"), "{kind}");
    }
}

#[test]
fn bad_requests_exit_2_and_write_nothing() {
    let dir = support::scratch("figure_export_bad");
    let cases: [(&[&str], &str); 6] = [
        (&["--kind", "path", "--out", "p.png"], "vector"),
        (
            &["--kind", "cortex", "--component", "7", "--out", "c.png"],
            "numbered 1 to 3",
        ),
        (
            &["--kind", "cortex", "--component", "nose", "--out", "c.png"],
            "no component",
        ),
        (
            &["--kind", "cortex", "--width", "20", "--out", "c.png"],
            "200 to 8000",
        ),
        (&["--kind", "cortex", "--out", "c.pdf"], ".png or .svg"),
        (
            &["--kind", "scalp", "--dpi", "0", "--out", "s.png"],
            "50 to 2400",
        ),
    ];
    for (args, expected) in cases {
        let o = run(args, &dir);
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
        assert!(err.contains(expected), "{args:?}: {err}");
    }
    let left: Vec<_> = std::fs::read_dir(&dir).unwrap().collect();
    assert!(left.is_empty(), "files left behind: {left:?}");
    // The result file itself is never an output.
    let result = demo().join("result.h5");
    let before = std::fs::read(&result).unwrap();
    let o = run(
        &["--kind", "cortex", "--out", result.to_str().unwrap()],
        &dir,
    );
    assert_eq!(o.status.code(), Some(2));
    assert_eq!(std::fs::read(&result).unwrap(), before);
}
