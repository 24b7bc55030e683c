//! The command line.

use std::path::PathBuf;

pub struct Args {
    pub blocks: usize,
    pub seed: u64,
    pub out: PathBuf,
}

pub const USAGE: &str = concat!(
    "usage: ambit-region [--blocks N] [--seed S] --out DIR\n",
    "  Writes an invented region (CSV files and load.sql) into DIR.\n",
    "  --blocks N  target number of census blocks, 1000 to 1000000 (default 30000)\n",
    "  --seed S    unsigned 64-bit seed (default 1)\n",
    "  --out DIR   output directory (created if missing)"
);

pub fn parse_args() -> Result<Args, String> {
    let mut args = Args {
        blocks: 30_000,
        seed: 1,
        out: PathBuf::new(),
    };
    let mut it = std::env::args().skip(1);
    while let Some(a) = it.next() {
        let mut value = |name: &str| it.next().ok_or(format!("{name} needs a value"));
        match a.as_str() {
            "--blocks" => {
                let v = value("--blocks")?;
                args.blocks = v
                    .parse()
                    .map_err(|_| format!("--blocks: '{v}' is not a whole number"))?;
            }
            "--seed" => {
                let v = value("--seed")?;
                args.seed = v
                    .parse()
                    .map_err(|_| format!("--seed: '{v}' is not an unsigned 64-bit integer"))?;
            }
            "--out" => args.out = PathBuf::from(value("--out")?),
            "-h" | "--help" => return Err(String::new()),
            other => return Err(format!("unknown argument '{other}'")),
        }
    }
    if args.out.as_os_str().is_empty() {
        return Err("--out DIR is required".into());
    }
    if !(1000..=1_000_000).contains(&args.blocks) {
        return Err(format!(
            "--blocks {} is out of range: 1000 to 1000000",
            args.blocks
        ));
    }
    Ok(args)
}
