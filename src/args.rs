//! Argument parsers shared by every command. The names of methods and
//! gauges come from the library (`FromStr`/`Display`), never from here.

use crate::app_error::AppError;
use clap::builder::{PossibleValue, PossibleValuesParser, TypedValueParser};
use kzero_engine::{Gauge, MethodChoice, Settings, Shard, TableFormat};

/// The `--digits` parser shared by every command: 5..=200.
pub fn digits_parser() -> clap::builder::RangedI64ValueParser<u32> {
    clap::value_parser!(u32).range(
        i64::from(kzero_bethe::settings::MIN_DIGITS)..=i64::from(kzero_bethe::settings::MAX_DIGITS),
    )
}

/// The `--method` parser: the names of [`MethodChoice`].
pub fn method_parser() -> impl TypedValueParser<Value = MethodChoice> {
    PossibleValuesParser::new(
        MethodChoice::ALL.map(|m| PossibleValue::new(m.name()).help(m.description())),
    )
    .try_map(|s| s.parse::<MethodChoice>())
}

/// The `--gauge` parser: the names of [`Gauge`].
pub fn gauge_parser() -> impl TypedValueParser<Value = Gauge> {
    PossibleValuesParser::new(
        Gauge::ALL.map(|g| PossibleValue::new(g.name()).help(g.description())),
    )
    .try_map(|s| s.parse::<Gauge>())
}

/// The `--shard K/M` parser.
pub fn shard_parser(s: &str) -> Result<Shard, kzero_engine::ShardError> {
    s.parse()
}

/// The settings of `--digits D` (absolute goal, default 20) or
/// `--significant D` (significant-digit goal); clap keeps the two apart.
pub fn goal_settings(digits: Option<u32>, significant: Option<u32>) -> Settings {
    match (digits, significant) {
        (_, Some(d)) => Settings::significant(d),
        (Some(d), None) => Settings::with_digits(d),
        (None, None) => Settings::with_digits(DEFAULT_DIGITS),
    }
}

/// The default of `--digits`.
pub const DEFAULT_DIGITS: u32 = 20;

/// `--gauge` of `kzero state`: one form, or `all` (the three forms and
/// their spread).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum GaugeArg {
    /// One dipole form.
    One(Gauge),
    /// All three forms.
    All,
}

/// The `--gauge` parser of `kzero state`: the names of [`Gauge`] and `all`.
pub fn gauge_or_all_parser() -> impl TypedValueParser<Value = GaugeArg> {
    let mut values: Vec<PossibleValue> = Gauge::ALL
        .iter()
        .map(|g| PossibleValue::new(g.name()).help(g.description()))
        .collect();
    values.push(
        PossibleValue::new("all")
            .help("all three forms, computed independently, with the spread between them"),
    );
    PossibleValuesParser::new(values).try_map(|s| {
        if s == "all" {
            Ok(GaugeArg::All)
        } else {
            s.parse::<Gauge>().map(GaugeArg::One)
        }
    })
}

/// Refuses `--gauge` with a method that has no dipole form (`green`): an
/// option that a method would ignore is bad input (exit 2). The rule and its
/// message are the library's ([`MethodChoice::gauge`]).
///
/// # Errors
/// [`AppError::BadInput`] for `--gauge` with `--method green`.
pub fn refuse_unused_gauge<T>(method: MethodChoice, gauge: Option<T>) -> Result<(), AppError> {
    method.gauge(gauge.map(|_| kzero_bethe::Gauge::default()))?;
    Ok(())
}

/// The powers k of `--sums LIST`: the integers of the list, or every
/// supported power for `all` (range checks are the library's).
///
/// # Errors
/// [`AppError::BadInput`] for an item that is not an integer, or `all`
/// with other items.
pub fn powers(list: &[String]) -> Result<Vec<i64>, AppError> {
    if list.len() == 1 && list[0].trim() == "all" {
        return Ok(kzero_engine::sums::requested_powers(None));
    }
    list.iter()
        .map(|x| {
            x.trim().parse::<i64>().map_err(|_| {
                AppError::BadInput(format!(
                    "--sums: '{x}' is not an integer power k (give a list such as -2,0,2, or all)"
                ))
            })
        })
        .collect()
}

/// The `--format` parser of tabular outputs: the names of [`TableFormat`].
pub fn format_parser() -> impl TypedValueParser<Value = TableFormat> {
    PossibleValuesParser::new(
        TableFormat::ALL.map(|f| PossibleValue::new(f.name()).help(f.description())),
    )
    .try_map(|s| s.parse::<TableFormat>())
}
