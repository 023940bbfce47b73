//! `--shard I/N|auto`: which part of a sweep or map one machine runs, given by hand or taken
//! from a Slurm array job's variables.

use anyhow::{Result, bail};

/// A shard as typed: `I/N` or `auto`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ShardArg {
    /// Every N-th value or cell from I.
    Fixed {
        /// This shard's number, from 0.
        index: usize,
        /// The number of shards.
        count: usize,
    },
    /// I and N from Slurm's array variables.
    Auto,
}

/// Slurm's variable with this array task's number.
pub const TASK_ID: &str = "SLURM_ARRAY_TASK_ID";
/// Slurm's variable with the array's number of tasks.
pub const TASK_COUNT: &str = "SLURM_ARRAY_TASK_COUNT";
/// Slurm's variable with the array's lowest task number (`--array=1-4` starts at 1).
pub const TASK_MIN: &str = "SLURM_ARRAY_TASK_MIN";

/// Parses `I/N` (0 <= I < N) or `auto`.
pub fn parse_shard(text: &str) -> Result<ShardArg, String> {
    if text.trim() == "auto" {
        return Ok(ShardArg::Auto);
    }
    let (i, n) = text
        .split_once('/')
        .ok_or("expected I/N (for example 0/4) or auto")?;
    let index: usize = i
        .trim()
        .parse()
        .map_err(|_| format!("'{i}' is not a shard number"))?;
    let count: usize = n
        .trim()
        .parse()
        .map_err(|_| format!("'{n}' is not a shard count"))?;
    if count == 0 || index >= count {
        return Err(format!("shard {index}/{count}: need 0 <= I < N"));
    }
    Ok(ShardArg::Fixed { index, count })
}

impl ShardArg {
    /// The shard as `(I, N)`; `auto` reads the array task's number and count from the
    /// environment (the number counted from the array's lowest task, so `--array=1-4` gives
    /// 0/4 to 3/4).
    pub fn resolve(self) -> Result<(usize, usize)> {
        self.resolve_with(|name| std::env::var(name).ok())
    }

    /// [`ShardArg::resolve`] with the variables looked up by `var`.
    pub fn resolve_with(self, var: impl Fn(&str) -> Option<String>) -> Result<(usize, usize)> {
        let ShardArg::Fixed { index, count } = self else {
            let number = |name: &str| -> Result<Option<usize>> {
                match var(name) {
                    None => Ok(None),
                    Some(text) => match text.trim().parse() {
                        Ok(n) => Ok(Some(n)),
                        Err(_) => bail!("--shard auto: {name}={text} is not a whole number"),
                    },
                }
            };
            let (Some(id), Some(count)) = (number(TASK_ID)?, number(TASK_COUNT)?) else {
                bail!(
                    "--shard auto takes the shard from a Slurm array job, but {TASK_ID} and \
                     {TASK_COUNT} are not both set: run it inside `sbatch --array=0-N` or give \
                     the shard as I/N"
                );
            };
            let min = number(TASK_MIN)?.unwrap_or(0);
            let index = id.checked_sub(min).filter(|i| *i < count);
            let Some(index) = index else {
                bail!(
                    "--shard auto: task {id} of an array of {count} starting at {min} is not a \
                     shard 0 to {}: use a contiguous array such as --array=0-{}",
                    count.saturating_sub(1),
                    count.saturating_sub(1)
                );
            };
            return Ok((index, count));
        };
        Ok((index, count))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn env<'a>(vars: &'a [(&'a str, &'a str)]) -> impl Fn(&str) -> Option<String> + 'a {
        move |name| {
            vars.iter()
                .find(|(n, _)| *n == name)
                .map(|(_, v)| v.to_string())
        }
    }

    #[test]
    fn auto_reads_the_array_variables() {
        let auto = parse_shard("auto").expect("auto");
        // [common practice] Slurm numbers array tasks from --array's first value
        let shard = auto.resolve_with(env(&[(TASK_ID, "2"), (TASK_COUNT, "4")]));
        assert_eq!(shard.expect("shard"), (2, 4));
        let shifted = auto.resolve_with(env(&[(TASK_ID, "4"), (TASK_COUNT, "4"), (TASK_MIN, "1")]));
        assert_eq!(shifted.expect("shard"), (3, 4));
        let missing = auto.resolve_with(env(&[(TASK_ID, "2")]));
        let text = missing.expect_err("no count").to_string();
        assert!(text.contains(TASK_COUNT), "{text}");
        assert_eq!(
            parse_shard("1/3"),
            Ok(ShardArg::Fixed { index: 1, count: 3 })
        );
        assert!(parse_shard("3/3").is_err());
    }
}
