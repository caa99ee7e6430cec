use super::extxyz::parse_info;
use super::lines::{find_newline, is_space, skip_spaces, token_end};
use super::numbers::parse_f64;
use super::*;
use crate::error::Error;

/// A small periodic table for the tests (symbols and numbers: IUPAC, common practice).
fn element(s: &str) -> Option<i64> {
    match s {
        "H" => Some(1),
        "C" => Some(6),
        "N" => Some(7),
        "O" => Some(8),
        "Na" => Some(11),
        "Cl" => Some(17),
        "Fe" => Some(26),
        _ => None,
    }
}

/// The lookup the reader is given: elements, and D = ²H (2.014 u here: the reader passes on
/// whatever mass the lookup gives).
fn table(s: &str) -> Option<(i64, Option<f64>)> {
    match s {
        "D" => Some((1, Some(2.014))),
        _ => element(s).map(|z| (z, None)),
    }
}

fn read(text: &str) -> XyzFrames {
    read_xyz_bytes(text.as_bytes(), "test.xyz", &table)
}

fn frame_positions(f: &XyzFrames, k: usize) -> &[[f64; 3]] {
    &f.positions[f.offsets[k]..f.offsets[k + 1]]
}

/// Every frame's error (`None` for a frame that was read), as a list.
fn errors(f: &XyzFrames) -> Vec<Option<Error>> {
    (0..f.n_frames()).map(|k| f.error(k).cloned()).collect()
}

fn comments(f: &XyzFrames) -> Vec<&str> {
    f.comments.iter().collect()
}

fn reason(f: &XyzFrames, k: usize) -> (usize, usize, String) {
    match f.error(k) {
        Some(Error::MalformedXyz {
            frame,
            line,
            reason,
            source,
        }) => {
            assert_eq!(source, "test.xyz");
            (*frame, *line, reason.clone())
        }
        other => panic!("frame {k}: expected a MalformedXyz error, got {other:?}"),
    }
}

use crate::testutil::Rng;

const WATER: &str = "3\nwater\nO 0.0 0.0 0.1173\nH 0.0 0.7572 -0.4692\nH 0.0 -0.7572 -0.4692\n";

#[test]
fn reads_one_standard_frame() {
    let f = read(WATER);
    assert_eq!(f.n_frames(), 1);
    assert_eq!(errors(&f), vec![None]);
    assert_eq!(f.offsets, vec![0, 3]);
    assert_eq!(f.numbers, vec![8, 1, 1]);
    assert_eq!(comments(&f), vec!["water"]);
    assert!(f.info(0).is_empty());
    assert_eq!(f.positions[1], [0.0, 0.7572, -0.4692]);
}

#[test]
fn round_trip_is_exact_for_many_frames() {
    let mut rng = Rng(42);
    let syms = ["H", "C", "N", "O", "Na", "Cl", "Fe"];
    let mut text = String::new();
    let mut want_pos = Vec::new();
    let mut want_num = Vec::new();
    let mut want_off = vec![0];
    for f in 0..200 {
        let n = 1 + (rng.next() * 30.0) as usize;
        text.push_str(&format!("{n}\nframe {f}\n"));
        for _ in 0..n {
            let k = (rng.next() * 7.0) as usize;
            let p = [
                (rng.next() - 0.5) * 200.0,
                (rng.next() - 0.5) * 1e-3,
                (rng.next() - 0.5) * 1e7,
            ];
            // `{}` writes the shortest text that reads back to the same f64.
            text.push_str(&format!("{} {} {:e} {}\n", syms[k], p[0], p[1], p[2]));
            want_pos.push(p);
            want_num.push(element(syms[k]).unwrap());
        }
        want_off.push(want_pos.len());
    }
    let f = read(&text);
    assert!(f.errors.is_empty());
    assert_eq!(f.positions, want_pos);
    assert_eq!(f.numbers, want_num);
    assert_eq!(f.offsets, want_off);
    assert_eq!(f.comments.get(199).unwrap(), "frame 199");
}

#[test]
fn tolerates_crlf_tabs_spaces_extra_columns_and_trailing_blanks() {
    let text = "  2 \r\ncomment with spaces \r\n\tC\t1.0\t2.0\t3.0\t0.5 extra\r\n   H 1 2 4\r\n\
                1\n\nO 0 0 0\n\n  \n\t\n";
    let f = read(text);
    assert_eq!(errors(&f), vec![None, None]);
    assert_eq!(f.offsets, vec![0, 2, 3]);
    assert_eq!(
        f.positions,
        vec![[1.0, 2.0, 3.0], [1.0, 2.0, 4.0], [0.0; 3]]
    );
    assert_eq!(comments(&f), vec!["comment with spaces ", ""]);
    // No newline at the very end.
    let f = read("1\nx\nH 0 0 1");
    assert_eq!(f.positions, vec![[0.0, 0.0, 1.0]]);
}

#[test]
fn accepts_atomic_numbers_and_fortran_exponents() {
    let f = read("2\n\n6 1.5D+00 -2.0d-1 3E2\n1 0 0 0\n");
    assert_eq!(errors(&f), vec![None]);
    assert_eq!(f.numbers, vec![6, 1]);
    assert_eq!(f.positions[0], [1.5, -0.2, 300.0]);
    let f = read("1\n\n0 0 0 0\n");
    let (_, line, why) = reason(&f, 0);
    assert_eq!(
        (line, why.as_str()),
        (3, "atomic number '0' is outside 1..118")
    );
}

#[test]
fn honours_extended_xyz_properties() {
    let text = "2\nLattice=\"10 0 0 0 10 0 0 0 10\" Properties=species:S:1:vel:R:3:pos:R:3 \
                energy=-1.5 pbc=\"T T T\" label={a b} flag\n\
                C 9 9 9 1.0 2.0 3.0\nO 9 9 9 4.0 5.0 6.0 extra\n\
                1\nProperties=Z:I:1:pos:R:3\n8 0.5 0.5 0.5\n";
    let f = read(text);
    assert_eq!(errors(&f), vec![None, None]);
    assert_eq!(
        f.positions,
        vec![[1.0, 2.0, 3.0], [4.0, 5.0, 6.0], [0.5; 3]]
    );
    assert_eq!(f.numbers, vec![6, 8, 8]);
    let pairs = f.info(0);
    let info: Vec<(&str, &str)> = pairs
        .iter()
        .map(|(k, v)| (k.as_str(), v.as_str()))
        .collect();
    assert_eq!(
        info,
        vec![
            ("Lattice", "10 0 0 0 10 0 0 0 10"),
            ("Properties", "species:S:1:vel:R:3:pos:R:3"),
            ("energy", "-1.5"),
            ("pbc", "T T T"),
            ("label", "a b"),
            ("flag", "T"),
        ]
    );
    // A short extended line names the columns Properties asks for.
    let f = read("1\nProperties=species:S:1:vel:R:3:pos:R:3\nC 9 9 9 1.0 2.0\n");
    let (_, line, why) = reason(&f, 0);
    assert_eq!(
        (line, why.as_str()),
        (3, "expected 7 columns (from Properties), found 6")
    );
    // Properties without positions.
    let f = read("1\nProperties=species:S:1:vel:R:3\nC 9 9 9\n");
    let (_, line, why) = reason(&f, 0);
    assert_eq!(line, 2);
    assert!(why.contains("no pos:R:3 column"), "{why}");
    // A plain comment that merely contains '=' is a comment, not info.
    let f = read("1\nenergy = -76.4 hartree\nH 0 0 0\n");
    assert_eq!(errors(&f), vec![None]);
    assert!(f.info(0).is_empty());
}

#[test]
fn reports_each_malformed_case_and_keeps_reading() {
    let cases: &[(&str, usize, &str)] = &[
        (
            "3\nw\nO 0 0 0\nH 0 1\nH 0 -1 0\n",
            4,
            "expected 3 coordinates, found 2",
        ),
        (
            "3\nw\nO 0 0 0\nXx 0 1 0\nH 0 -1 0\n",
            4,
            "unknown element symbol 'Xx'",
        ),
        ("3\nw\nO 0 0 0\nH 0 nan 0\nH 0 -1 0\n", 4, "NaN coordinate"),
        (
            "3\nw\nO 0 0 0\nH 0 inf 0\nH 0 -1 0\n",
            4,
            "infinite coordinate",
        ),
        (
            "3\nw\nO 0 0 0\nH 0 1.2.3 0\nH 0 -1 0\n",
            4,
            "coordinate '1.2.3' is not a number",
        ),
        (
            "3\nw\nO 0 0 0\n\nH 0 -1 0\n",
            4,
            "blank line where atom 2 of 3 was expected",
        ),
    ];
    // `line` is the line within the bad frame; WATER (5 lines) comes first.
    for (bad, line, want) in cases {
        // A good frame before and after: the bad one never stops the rest.
        let text = format!("{WATER}{bad}{WATER}");
        let f = read(&text);
        assert_eq!(f.n_frames(), 3, "{want}");
        assert_eq!(errors(&f)[0], None);
        assert_eq!(errors(&f)[2], None, "{want}");
        let (frame, l, why) = reason(&f, 1);
        assert_eq!((frame, l, why.as_str()), (1, line + 5, *want));
        assert_eq!(f.offsets, vec![0, 3, 3, 6], "{want}");
        assert_eq!(frame_positions(&f, 2), frame_positions(&f, 0));
    }
}

#[test]
fn bad_count_lines_resynchronise() {
    // A count that is not a number: reported, then the next frame is found.
    let f = read(&format!(
        "{WATER}abc\nw\nO 0 0 0\nH 0 1 0\nH 0 -1 0\n{WATER}"
    ));
    assert_eq!(f.n_frames(), 3);
    assert_eq!(
        reason(&f, 1),
        (1, 6, "atom count 'abc' is not a whole number".to_string())
    );
    assert_eq!(errors(&f)[2], None);
    assert_eq!(f.offsets, vec![0, 3, 3, 6]);
    // A negative count.
    let f = read(&format!("-3\nw\nO 0 0 0\nH 0 1 0\nH 0 -1 0\n{WATER}"));
    assert_eq!(
        reason(&f, 0),
        (0, 1, "atom count '-3' is negative".to_string())
    );
    assert_eq!(errors(&f)[1], None);
    // A count that claims too many atoms: the next frame is not swallowed.
    let f = read(&format!("5\nw\nO 0 0 0\nH 0 1 0\nH 0 -1 0\n{WATER}{WATER}"));
    assert_eq!(f.n_frames(), 3);
    let (_, line, why) = reason(&f, 0);
    assert_eq!(line, 1);
    assert!(
        why.contains("says 5 atoms") && why.contains("line 6"),
        "{why}"
    );
    assert_eq!(errors(&f)[1..], [None, None]);
    assert_eq!(f.offsets, vec![0, 0, 3, 6]);
    // A count that claims too few atoms: the frame is bad, the next one is read.
    let f = read(&format!("2\nw\nO 0 0 0\nH 0 1 0\nH 0 -1 0\n{WATER}"));
    assert_eq!(f.n_frames(), 2);
    let (_, line, why) = reason(&f, 0);
    assert_eq!(line, 1);
    assert!(
        why.contains("says 2 atoms") && why.contains("line 5"),
        "{why}"
    );
    assert_eq!(errors(&f)[1], None);
    assert_eq!(f.offsets, vec![0, 0, 3]);
    assert_eq!(comments(&f), vec!["", "water"]);
    // A blank line between frames names its line.
    let f = read(&format!("{WATER}\n{WATER}"));
    assert_eq!(f.n_frames(), 3);
    assert_eq!(
        reason(&f, 1),
        (
            1,
            6,
            "blank line where an atom count was expected".to_string()
        )
    );
    assert_eq!(errors(&f)[2], None);
    assert_eq!(f.offsets, vec![0, 3, 3, 6]);
}

#[test]
fn a_big_frame_found_bad_after_its_atom_lines_leaves_nothing_behind() {
    // the scan takes the frame (and its runs of atom lines) first, then finds one atom
    // line too many: no atom, comment or run of it may remain
    let n = CHUNK_LINES * 2 + 5;
    let mut text = format!("{n}\nbig\n");
    for i in 0..=n {
        text.push_str(&format!("C {i} 0 0\n"));
    }
    text.push_str(WATER);
    let f = read(&text);
    assert_eq!(f.n_frames(), 2);
    let (_, line, why) = reason(&f, 0);
    assert_eq!(line, 1);
    assert!(why.contains("atom lines continue"), "{why}");
    assert_eq!(comments(&f), vec!["", "water"]);
    assert_eq!(f.offsets, vec![0, 0, 3]);
    assert_eq!(f.numbers, vec![8, 1, 1]);
}

#[test]
fn the_first_error_of_a_big_frame_wins_and_drops_all_its_atoms() {
    let n = CHUNK_LINES * 3;
    let mut text = String::from(WATER);
    text.push_str(&format!("{n}\nbig\n"));
    for i in 0..n {
        let bad = i == CHUNK_LINES + 7 || i == 2 * CHUNK_LINES + 1;
        text.push_str(if bad { "C 0 zz 0\n" } else { "C 1 2 3\n" });
    }
    text.push_str(WATER);
    for threads in [1, 3] {
        let f = crate::parallel::install(threads, || read(&text)).unwrap();
        assert_eq!(f.n_frames(), 3);
        // atom i of the big frame is on line 8 + i
        let (frame, line, why) = reason(&f, 1);
        assert_eq!((frame, line), (1, 8 + CHUNK_LINES + 7));
        assert_eq!(why, "coordinate 'zz' is not a number");
        assert_eq!(f.errors.len(), 1);
        assert_eq!(f.offsets, vec![0, 3, 3, 6]);
        assert_eq!(frame_positions(&f, 2), frame_positions(&f, 0));
        assert_eq!(f.positions.len(), 6);
    }
}

#[test]
fn truncated_file_and_trailing_text() {
    let f = read(&format!("{WATER}5\nw\nO 0 0 0\nH 0 1 0\n\n"));
    assert_eq!(f.n_frames(), 2);
    assert_eq!(
        reason(&f, 1),
        (1, 10, "file ends after 2 of 5 atoms".to_string())
    );
    assert_eq!(f.offsets, vec![0, 3, 3]);
    let f = read(&format!("{WATER}3\n"));
    assert_eq!(
        reason(&f, 1),
        (1, 7, "file ends before the comment line".to_string())
    );
    let f = read(&format!("{WATER}end of data\n\n"));
    assert_eq!(f.n_frames(), 2);
    assert_eq!(
        reason(&f, 1),
        (
            1,
            6,
            "unexpected text after the last frame: 'end of data'".to_string()
        )
    );
    assert_eq!(errors(&f)[0], None);
}

#[test]
fn empty_and_blank_inputs_have_no_frames() {
    assert_eq!(read("").n_frames(), 0);
    assert_eq!(read("\n\n  \r\n").n_frames(), 0);
    let f = read("0\nnothing here\n");
    assert_eq!(
        (f.n_frames(), f.offsets.clone(), errors(&f)),
        (1, vec![0, 0], vec![None])
    );
}

/// A file with one frame bigger than CHUNK_LINES, many small frames and some bad ones.
fn mixed_text() -> String {
    let mut rng = Rng(9);
    let mut text = String::new();
    let big = CHUNK_LINES * 2 + 123;
    text.push_str(&format!("{big}\nbig\n"));
    for i in 0..big {
        text.push_str(&format!("C {} {} {}\n", i, rng.next(), -rng.next()));
    }
    for f in 0..3000 {
        match f % 500 {
            7 => text.push_str("3\nbad\nO 0 0 0\nH 0 1\nH 0 -1 0\n"),
            8 => text.push_str("x\nbad count\nO 0 0 0\n"),
            _ => {
                let n = 1 + f % 9;
                text.push_str(&format!("{n}\nsmall {f}\n"));
                for a in 0..n {
                    text.push_str(&format!("N {a} {} {}\n", rng.next(), f));
                }
            }
        }
    }
    text
}

#[test]
fn results_are_identical_for_any_thread_count() {
    let text = mixed_text();
    let run = |n: usize| crate::parallel::install(n, || read(&text)).unwrap();
    let one = run(1);
    assert_eq!(one, run(2));
    assert_eq!(one, run(4));
    // The big frame comes first and in order.
    let big = CHUNK_LINES * 2 + 123;
    assert_eq!(one.offsets[1], big);
    assert!(one.positions[..big]
        .iter()
        .enumerate()
        .all(|(i, p)| p[0] == i as f64));
    let n_bad = one.errors.len();
    assert_eq!(n_bad, 12);
    assert_eq!(one.n_frames(), 3001);
    // Small frames keep their order: frame k+1 has comment "small k" where good.
    assert_eq!(one.comments.get(1).unwrap(), "small 0");
    assert_eq!(one.comments.get(3000).unwrap(), "small 2999");
}

#[test]
fn reads_files_by_path() {
    let dir = std::env::temp_dir().join(format!("gammatrace-readers-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("water.xyz");
    std::fs::write(&path, WATER.repeat(4)).unwrap();
    let f = read_xyz_path(&path, "water.xyz", &table).unwrap();
    assert_eq!((f.n_frames(), f.positions.len()), (4, 12));
    let empty = dir.join("empty.xyz");
    std::fs::write(&empty, "").unwrap();
    assert_eq!(
        read_xyz_path(&empty, "empty.xyz", &table)
            .unwrap()
            .n_frames(),
        0
    );
    let missing = read_xyz_path(&dir.join("missing.xyz"), "missing.xyz", &table).unwrap_err();
    assert!(
        matches!(&missing, Error::Io { source, .. } if source == "missing.xyz"),
        "{missing:?}"
    );
    assert!(read_xyz_path(&dir, "dir", &table).is_err());
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn float_parser_matches_the_standard_parser() {
    let mut rng = Rng(77);
    for _ in 0..20_000 {
        let x = (rng.next() - 0.5) * 10f64.powi((rng.next() * 40.0) as i32 - 20);
        for s in [
            format!("{x}"),
            format!("{x:e}"),
            format!("{x:.3}"),
            format!("{x:.17}"),
            format!("{x:E}"),
        ] {
            let want: f64 = s.parse().unwrap();
            assert_eq!(
                parse_f64(s.as_bytes()).map(f64::to_bits),
                Some(want.to_bits()),
                "{s}"
            );
        }
    }
    for s in [
        "0",
        "-0",
        "+1",
        ".5",
        "5.",
        "1e5",
        "1E-5",
        "123456789012345678901234567890",
        "0.000000000000000000000001234",
        "1e308",
        "4.9e-324",
        "1e400",
    ] {
        let want: f64 = s.parse().unwrap();
        assert_eq!(
            parse_f64(s.as_bytes()).map(f64::to_bits),
            Some(want.to_bits()),
            "{s}"
        );
    }
    assert_eq!(parse_f64(b"1.5D3"), Some(1500.0));
    assert_eq!(parse_f64(b"-2d-2"), Some(-0.02));
    assert!(parse_f64(b"nan").is_some_and(f64::is_nan));
    for bad in ["", "-", ".", "e5", "1e", "1.2.3", "abc", "1x", "--1"] {
        assert_eq!(parse_f64(bad.as_bytes()), None, "{bad}");
    }
}

#[test]
fn word_scans_match_byte_scans() {
    let mut rng = Rng(8);
    let alphabet = b"  \t\r\n\x01ab.9\xc3\xa9";
    let data: Vec<u8> = (0..4000)
        .map(|_| alphabet[(rng.next() * alphabet.len() as f64) as usize])
        .collect();
    for i in 0..=data.len() {
        let mut j = i;
        while j < data.len() && is_space(data[j]) {
            j += 1;
        }
        assert_eq!(skip_spaces(&data, i), j, "skip from {i}");
        let mut j = i;
        while j < data.len() && !is_space(data[j]) && data[j] != b'\n' {
            j += 1;
        }
        assert_eq!(token_end(&data, i), j, "token from {i}");
    }
}

#[test]
fn newline_search_matches_a_plain_scan() {
    let mut rng = Rng(5);
    let data: Vec<u8> = (0..5000)
        .map(|_| {
            if rng.next() < 0.05 {
                b'\n'
            } else {
                b'a' + (rng.next() * 20.0) as u8
            }
        })
        .collect();
    for from in 0..data.len() + 2 {
        let want = data
            .get(from..)
            .and_then(|r| r.iter().position(|&b| b == b'\n'))
            .map(|p| p + from);
        assert_eq!(find_newline(&data, from), want, "from {from}");
    }
}

#[test]
fn comment_lines_parse_as_key_value_pairs_or_not_at_all() {
    assert_eq!(
        parse_info("a=1 b=\"x \\\" y\""),
        Some(vec![
            ("a".into(), "1".into()),
            ("b".into(), "x \" y".into())
        ])
    );
    assert_eq!(parse_info("just words"), None);
    assert_eq!(parse_info("a=\"unclosed"), None);
    assert_eq!(parse_info("a= b"), None);
    assert_eq!(parse_info(""), None);
}

#[test]
fn fortran_exponents_read_as_e_exponents_and_nothing_else_does() {
    // Fortran 'D' exponents: common practice in quantum-chemistry output.
    for (text, as_e) in [
        ("1.5D-03", "1.5e-03"),
        ("+.5d+2", "+.5e+2"),
        ("5.D0", "5.e0"),
        ("-12d3", "-12e3"),
        (
            "0.1234567890123456789012345678901234567890123456789012345678901234D+1",
            "0.1234567890123456789012345678901234567890123456789012345678901234e+1",
        ),
    ] {
        let want: f64 = as_e.parse().unwrap();
        assert_eq!(
            parse_f64(text.as_bytes()).map(f64::to_bits),
            Some(want.to_bits()),
            "{text}"
        );
    }
    for bad in [
        "infd", "nanD", "1d", "d5", "1d5d5", "1e5d", "1.5D3x", "D", "0xD1",
    ] {
        assert_eq!(parse_f64(bad.as_bytes()), None, "{bad}");
    }
}

#[test]
fn nuclide_symbols_and_a_masses_column_give_atoms_their_masses() {
    // Plain frames: no masses at all (nothing allocated).
    let f = read(WATER);
    assert!(f.masses.is_empty());
    // D through the lookup; the H atoms keep NaN (standard weight).
    let f = read("3\nHDO\nO 0 0 0.1\nD 0 0.76 -0.47\nH 0 -0.76 -0.47\n");
    assert_eq!(errors(&f), vec![None]);
    assert_eq!(f.numbers, vec![8, 1, 1]);
    assert_eq!(f.masses.len(), 3);
    assert!(f.masses[0].is_nan() && f.masses[2].is_nan());
    assert_eq!(f.masses[1], 2.014);
    // A masses column wins over the symbol; frames without masses get NaN in a file where
    // another frame has some; the masses stay aligned with the atoms across frames.
    let text = "1\nplain\nH 0 0 0\n\
                2\nProperties=species:S:1:pos:R:3:masses:R:1 pbc=\"F F F\"\n\
                H 0 0 0 3.016\nD 0 0 1 1.008\n";
    let f = read(text);
    assert_eq!(errors(&f), vec![None, None]);
    assert_eq!(f.offsets, vec![0, 1, 3]);
    assert!(f.masses[0].is_nan());
    assert_eq!(&f.masses[1..], &[3.016, 1.008]);
    // The mass column may come before the position.
    let f = read("1\nProperties=masses:R:1:species:S:1:pos:R:3\n2.014 H 1 2 3\n");
    assert_eq!(errors(&f), vec![None]);
    assert_eq!(
        (f.masses.clone(), f.positions[0]),
        (vec![2.014], [1.0, 2.0, 3.0])
    );
    // A mass that is not a positive number is a bad frame, named by its line.
    for bad in ["-1", "0", "abc", "nan"] {
        let f = read(&format!(
            "1\nProperties=species:S:1:pos:R:3:masses:R:1\nH 0 0 0 {bad}\n"
        ));
        let (_, line, why) = reason(&f, 0);
        assert_eq!(line, 3);
        assert!(why.contains(&format!("mass '{bad}'")), "{why}");
    }
    // Missing mass column: too few columns.
    let f = read("1\nProperties=species:S:1:pos:R:3:masses:R:1\nH 0 0 0\n");
    let (_, _, why) = reason(&f, 0);
    assert_eq!(why, "expected 5 columns (from Properties), found 4");
}
