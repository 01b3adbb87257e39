//! The README's tour is real output: every `$ tauwise …` block in README.md
//! is run on the bundled demo data, and each line it shows (outside the `…`
//! elisions) must appear in the command's actual output, in the same order.
//! When a change alters an output, this test names the block and the line,
//! and the README is regenerated from a real run.

use std::path::Path;
use std::process::Command;

/// One `$ tauwise …` block: the arguments and the lines the README shows.
struct Block {
    line: usize,
    args: Vec<String>,
    shown: Vec<String>,
}

fn blocks(readme: &str) -> Vec<Block> {
    let lines: Vec<&str> = readme.lines().collect();
    let mut out = Vec::new();
    let mut i = 0;
    while i < lines.len() {
        let Some(cmd) = lines[i].strip_prefix("$ tauwise ") else {
            i += 1;
            continue;
        };
        let start = i + 1;
        let mut cmd = cmd.to_string();
        while cmd.ends_with('\\') {
            cmd.pop();
            i += 1;
            cmd.push(' ');
            cmd.push_str(lines[i].trim());
        }
        i += 1;
        let mut shown = Vec::new();
        while i < lines.len() && !lines[i].starts_with("```") {
            shown.push(lines[i].trim_end().to_string());
            i += 1;
        }
        out.push(Block {
            line: start,
            args: cmd.split_whitespace().map(str::to_string).collect(),
            shown,
        });
    }
    out
}

#[test]
fn every_tour_block_is_real_output() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let readme = std::fs::read_to_string(root.join("README.md")).unwrap();
    let blocks = blocks(&readme);
    assert!(blocks.len() >= 5, "the README tour has too few blocks");
    for b in &blocks {
        let out = Command::new(env!("CARGO_BIN_EXE_tauwise"))
            .args(&b.args)
            .current_dir(root)
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "README.md:{}: tauwise {} failed: {}",
            b.line,
            b.args.join(" "),
            String::from_utf8_lossy(&out.stderr)
        );
        let text = String::from_utf8_lossy(&out.stdout);
        let actual: Vec<&str> = text.lines().map(str::trim_end).collect();
        let mut at = 0;
        for want in b.shown.iter().filter(|l| !l.is_empty() && *l != "…") {
            match actual[at..].iter().position(|l| l == want) {
                Some(k) => at += k + 1,
                None => panic!(
                    "README.md block at line {} (tauwise {}): the line\n  {want}\nis not in the output (after the lines already matched); regenerate the block from a real run. Output:\n{text}",
                    b.line,
                    b.args.join(" ")
                ),
            }
        }
    }
}
