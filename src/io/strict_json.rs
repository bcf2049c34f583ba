//! JSON text to a `serde_json::Value`, refusing what serde_json would silently resolve: a key given twice in one
//! object (serde_json keeps the last, so a reader of the file would see another board than the one computed).

use super::Place;
use serde::Deserialize;
use serde::de::{self, Deserializer, MapAccess, SeqAccess, Visitor};
use serde_json::{Map, Number, Value};
use std::fmt;

/// Parse `text` as JSON. Errors carry the line and column (1-based) and a reason; a duplicate key is placed at
/// its second occurrence.
pub fn parse(text: &str) -> Result<Value, (Place, String)> {
    let mut de = serde_json::Deserializer::from_str(text);
    let value = Strict::deserialize(&mut de).and_then(|v| de.end().map(|_| v.0)).map_err(|e| {
        let reason = without_position(&e);
        let place = if e.line() == 0 { Place::Whole } else { Place::LineColumn(e.line(), e.column().max(1)) };
        match reason.strip_prefix(DUPLICATE) {
            Some(key) => (duplicate_place(text, &e, key).unwrap_or(place), format!("duplicate key {key}")),
            None => (place, format!("not valid JSON: {reason}")),
        }
    })?;
    Ok(value)
}

/// How the visitor marks a duplicate key in its error, before the key as JSON text.
const DUPLICATE: &str = "duplicate-key ";

/// serde_json's message without its own " at line L column C" tail (the place is given apart).
fn without_position(e: &serde_json::Error) -> String {
    let msg = e.to_string();
    match msg.rfind(" at line ") {
        Some(i) => msg[..i].to_string(),
        None => msg,
    }
}

/// The line and column where the duplicate key `key` (as JSON text, quoted) starts: serde_json reports the
/// place just past it, so look back from there.
fn duplicate_place(text: &str, e: &serde_json::Error, key: &str) -> Option<Place> {
    let line_start = text.split_inclusive('\n').take(e.line().saturating_sub(1)).map(str::len).sum::<usize>();
    let end = text.get(line_start..)?.char_indices().nth(e.column()).map_or(text.len(), |(i, _)| line_start + i);
    let start = text.get(..end)?.rfind(key)?;
    let before = &text[..start];
    let line = before.matches('\n').count() + 1;
    let column = before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
    Some(Place::LineColumn(line, column))
}

/// A JSON value read with duplicate keys refused.
struct Strict(Value);

impl<'de> Deserialize<'de> for Strict {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        deserializer.deserialize_any(StrictVisitor).map(Strict)
    }
}

struct StrictVisitor;

impl<'de> Visitor<'de> for StrictVisitor {
    type Value = Value;

    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("any JSON value")
    }

    fn visit_bool<E>(self, v: bool) -> Result<Value, E> {
        Ok(Value::Bool(v))
    }

    fn visit_i64<E>(self, v: i64) -> Result<Value, E> {
        Ok(Value::Number(v.into()))
    }

    fn visit_u64<E>(self, v: u64) -> Result<Value, E> {
        Ok(Value::Number(v.into()))
    }

    fn visit_f64<E: de::Error>(self, v: f64) -> Result<Value, E> {
        Number::from_f64(v).map(Value::Number).ok_or_else(|| E::custom("a number too large for a 64-bit float"))
    }

    fn visit_str<E>(self, v: &str) -> Result<Value, E> {
        Ok(Value::String(v.to_string()))
    }

    fn visit_string<E>(self, v: String) -> Result<Value, E> {
        Ok(Value::String(v))
    }

    fn visit_unit<E>(self) -> Result<Value, E> {
        Ok(Value::Null)
    }

    fn visit_none<E>(self) -> Result<Value, E> {
        Ok(Value::Null)
    }

    fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<Value, A::Error> {
        let mut items = Vec::new();
        while let Some(Strict(v)) = seq.next_element()? {
            items.push(v);
        }
        Ok(Value::Array(items))
    }

    fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<Value, A::Error> {
        let mut out = Map::new();
        while let Some(key) = map.next_key::<String>()? {
            if out.contains_key(&key) {
                return Err(de::Error::custom(format!("{DUPLICATE}{}", Value::String(key))));
            }
            let Strict(v) = map.next_value()?;
            out.insert(key, v);
        }
        Ok(Value::Object(out))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn duplicate_key_placed_at_its_second_occurrence() {
        let text = "{\n  \"count\": 4,\n  \"count\": 0\n}";
        let (place, why) = parse(text).unwrap_err();
        assert_eq!(place, Place::LineColumn(3, 3), "{why}");
        assert_eq!(why, "duplicate key \"count\"");
    }

    #[test]
    fn same_key_in_two_objects_is_fine() {
        let v = parse(r#"[{"a": 1}, {"a": 2}]"#).unwrap();
        assert_eq!(v[1]["a"], 2);
    }

    #[test]
    fn syntax_errors_keep_their_place() {
        let (place, why) = parse("{\"a\": 1,}").unwrap_err();
        assert!(matches!(place, Place::LineColumn(1, _)), "{place:?}");
        assert!(why.starts_with("not valid JSON"), "{why}");
    }
}
