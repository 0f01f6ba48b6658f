//! Argument parsers shared by every command. The names of methods and
//! gauges come from the library (`FromStr`/`Display`), never from here.

use clap::builder::{PossibleValue, PossibleValuesParser, TypedValueParser};
use kzero_engine::{Gauge, MethodChoice, Shard};

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
