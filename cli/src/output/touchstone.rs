//! `response.s<N>p`: the S-matrix over the band in Touchstone version 1.1 syntax (an open
//! format; the layout rules below are those of the version 1.1 specification, from
//! memory).
//!
//! * `!` starts a comment; one option line `# GHZ S RI R 50`: frequency unit, scattering
//!   parameters, real/imaginary pairs, reference resistance.
//! * One data block per frequency: the frequency, then the parameters as re/im pairs.
//!   1 port: `f S11`. 2 ports: `f S11 S21 S12 S22` on one line (the 2-port order is
//!   column-wise). 3 or more ports: row by row, `f S11 S12 … S1N` then each further row
//!   on new lines, at most four pairs per line.
//!
//! antinode's S-parameters are normalised to the TE10 wave of each port (power waves,
//! Σ|a|² = forward power), not to a resistance; the R 50 on the option line is the
//! format's default and nominal only, which a comment in the file says.

use std::fmt::Write as _;

/// The file text. `s[f][out][in]` = [re, im] of S at `frequencies_ghz[f]`.
pub fn format(
    ports: &[String],
    frequencies_ghz: &[f64],
    s: &[Vec<Vec<[f64; 2]>>],
    comments: &[String],
) -> String {
    let n = ports.len();
    let mut o = String::new();
    for c in comments {
        for line in c.lines() {
            let _ = writeln!(o, "! {line}");
        }
    }
    let _ = writeln!(o, "! ports: {}", ports.join(", "));
    let _ = writeln!(
        o,
        "! S normalised to each port's TE10 wave (power waves); R 50 is nominal only"
    );
    let _ = writeln!(o, "# GHZ S RI R 50");
    let pair = |v: [f64; 2]| format!(" {:.9e} {:.9e}", v[0], v[1]);
    for (f, m) in frequencies_ghz.iter().zip(s) {
        let _ = write!(o, "{f:.9}");
        match n {
            1 => o.push_str(&pair(m[0][0])),
            2 => {
                for (i, j) in [(0, 0), (1, 0), (0, 1), (1, 1)] {
                    o.push_str(&pair(m[i][j]));
                }
            }
            _ => {
                for (i, row) in m.iter().enumerate() {
                    for (j, &v) in row.iter().enumerate() {
                        if j > 0 && j % 4 == 0 || (i > 0 && j == 0) {
                            o.push('\n');
                        }
                        o.push_str(&pair(v));
                    }
                }
            }
        }
        o.push('\n');
    }
    o
}

#[cfg(test)]
mod tests {
    use super::*;

    fn matrix(n: usize) -> Vec<Vec<[f64; 2]>> {
        (0..n)
            .map(|i| {
                (0..n)
                    .map(|j| [(10 * (i + 1) + j + 1) as f64, -1.0])
                    .collect()
            })
            .collect()
    }

    fn data_lines(text: &str) -> Vec<Vec<f64>> {
        text.lines()
            .filter(|l| !l.starts_with('!') && !l.starts_with('#'))
            .map(|l| l.split_whitespace().map(|x| x.parse().unwrap()).collect())
            .collect()
    }

    /// The version 1.1 layouts: 1 port one pair, 2 ports S11 S21 S12 S22 on one line,
    /// 4 ports one matrix row per line, 5 ports rows wrapped after four pairs. Entry ij
    /// is encoded as the number 10·(i+1) + (j+1).
    #[test]
    fn layouts_follow_the_version_1_1_rules() {
        let names = |n: usize| (1..=n).map(|p| format!("p{p}")).collect::<Vec<_>>();
        let t1 = format(&names(1), &[2.45], &[matrix(1)], &[]);
        assert!(t1.contains("# GHZ S RI R 50"));
        assert_eq!(data_lines(&t1), vec![vec![2.45, 11.0, -1.0]]);
        let t2 = format(
            &names(2),
            &[2.4, 2.5],
            &[matrix(2), matrix(2)],
            &["a\nb".into()],
        );
        assert!(t2.starts_with("! a\n! b\n"));
        let rows = data_lines(&t2);
        assert_eq!(rows.len(), 2);
        let order: Vec<f64> = rows[0].iter().skip(1).step_by(2).copied().collect();
        assert_eq!(order, vec![11.0, 21.0, 12.0, 22.0]);
        let rows = data_lines(&format(&names(4), &[2.45], &[matrix(4)], &[]));
        assert_eq!(rows.len(), 4);
        assert_eq!(rows[0].len(), 9); // frequency + 4 pairs
        assert_eq!(rows[1][0], 21.0);
        let rows = data_lines(&format(&names(5), &[2.45], &[matrix(5)], &[]));
        // Each row of 5 pairs: 4 on one line, 1 on the next.
        assert_eq!(rows.len(), 10);
        assert_eq!(rows[0].len(), 9);
        assert_eq!(rows[1], vec![15.0, -1.0]);
        assert_eq!(rows[2][0], 21.0);
    }
}
