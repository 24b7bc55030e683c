//! The command line.

use std::path::PathBuf;

pub struct Args {
    pub blocks: usize,
    /// The national country (many states) instead of the demo state.
    pub national: bool,
    pub seed: u64,
    pub out: PathBuf,
}

/// Blocks of the national country by default (about the census blocks
/// of a large country's census, from memory).
pub const NATIONAL_BLOCKS: usize = 8_100_000;

pub const USAGE: &str = concat!(
    "usage: ambit-region [--national] [--blocks N|national] [--seed S] --out DIR\n",
    "  Writes an invented region (CSV files and load.sql) into DIR.\n",
    "  --blocks N  target number of census blocks, 1000 to 1000000 (default 30000);\n",
    "              'national' is --national --blocks 8100000\n",
    "  --national  an invented country of 54 states and about 3,100 counties\n",
    "              instead of one state; N from 1000 to 100000000 (default 8100000)\n",
    "  --seed S    unsigned 64-bit seed (default 1)\n",
    "  --out DIR   output directory (created if missing)"
);

pub fn parse_args() -> Result<Args, String> {
    let mut blocks = None;
    let mut args = Args {
        blocks: 30_000,
        national: false,
        seed: 1,
        out: PathBuf::new(),
    };
    let mut it = std::env::args().skip(1);
    while let Some(a) = it.next() {
        let mut value = |name: &str| it.next().ok_or(format!("{name} needs a value"));
        match a.as_str() {
            "--blocks" => {
                let v = value("--blocks")?;
                if v == "national" {
                    args.national = true;
                    blocks = Some(NATIONAL_BLOCKS);
                } else {
                    blocks = Some(
                        v.parse()
                            .map_err(|_| format!("--blocks: '{v}' is not a whole number"))?,
                    );
                }
            }
            "--seed" => {
                let v = value("--seed")?;
                args.seed = v
                    .parse()
                    .map_err(|_| format!("--seed: '{v}' is not an unsigned 64-bit integer"))?;
            }
            "--national" => args.national = true,
            "--out" => args.out = PathBuf::from(value("--out")?),
            "-h" | "--help" => return Err(String::new()),
            other => return Err(format!("unknown argument '{other}'")),
        }
    }
    if args.out.as_os_str().is_empty() {
        return Err("--out DIR is required".into());
    }
    let max = if args.national {
        args.blocks = blocks.unwrap_or(NATIONAL_BLOCKS);
        100_000_000
    } else {
        args.blocks = blocks.unwrap_or(30_000);
        1_000_000
    };
    if !(1000..=max).contains(&args.blocks) {
        return Err(format!(
            "--blocks {} is out of range: 1000 to {max}{}",
            args.blocks,
            if args.national {
                ""
            } else {
                " (more with --national)"
            }
        ));
    }
    Ok(args)
}
