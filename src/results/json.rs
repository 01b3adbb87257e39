//! JSON for the documents of [`crate::results`]: a serde serializer into a
//! [`serde_json::Value`] that writes every number that is not finite as the
//! string `"inf"`, `"-inf"` or `"NaN"` and records where it did, so that the
//! document can list those members under `"not_finite"` (docs/verdicts.md,
//! docs/json.md). JSON numbers cannot be NaN or infinite, and `null` means
//! "not computed" in tauwise's JSON, so an overflowed value is never written
//! as `null`.
//!
//! Every `f64` of every result type goes through `serialize_f64` of [`Serializer`]
//! here — the rule is implemented once, not by annotating fields.
//!
//! ```
//! use tauwise::results::json::to_value;
//! #[derive(serde::Serialize)]
//! struct Row { t: f64, p95: f64 }
//! let (v, not_finite) = to_value(&vec![Row { t: 1.0, p95: f64::INFINITY }]).unwrap();
//! assert_eq!(v[0]["p95"], "inf");
//! assert_eq!(not_finite, ["[0].p95"]);
//! ```

use serde::ser::{self, Serialize};
use serde_json::{Map, Value};
use std::cell::RefCell;

/// The strings written for +∞, −∞ and NaN.
pub const NOT_FINITE: [&str; 3] = ["inf", "-inf", "NaN"];

/// The error of this serializer (serde_json's).
pub type Error = serde_json::Error;

/// Serialise `v` into a JSON value; returns the value and the paths
/// (`te[3].p95`) of the members written as not finite.
pub fn to_value<T: Serialize + ?Sized>(v: &T) -> Result<(Value, Vec<String>), Error> {
    let found = RefCell::new(Vec::new());
    let value = v.serialize(Serializer {
        path: String::new(),
        found: &found,
    })?;
    Ok((value, found.into_inner()))
}

/// A document as text (pretty-printed, final newline), with `"not_finite"`
/// added at the top level when any computed member is not finite. Returns
/// the text and those members' paths (for a note on standard error).
pub fn to_text<T: Serialize + ?Sized>(v: &T) -> Result<(String, Vec<String>), Error> {
    let (mut value, found) = to_value(v)?;
    if !found.is_empty() {
        if let Value::Object(m) = &mut value {
            m.insert(
                "not_finite".into(),
                Value::Array(found.iter().cloned().map(Value::String).collect()),
            );
        }
    }
    let mut s = serde_json::to_string_pretty(&value)?;
    s.push('\n');
    Ok((s, found))
}

/// The JSON text of a finite-or-not number, as the serializer writes it.
pub fn number(v: f64) -> Value {
    if v.is_finite() {
        Value::from(v)
    } else if v.is_nan() {
        Value::from(NOT_FINITE[2])
    } else if v > 0.0 {
        Value::from(NOT_FINITE[0])
    } else {
        Value::from(NOT_FINITE[1])
    }
}

/// The serializer: builds a [`Value`], tracking the path of each member.
pub struct Serializer<'a> {
    path: String,
    found: &'a RefCell<Vec<String>>,
}

impl<'a> Serializer<'a> {
    fn child(&self, path: String) -> Serializer<'a> {
        Serializer {
            path,
            found: self.found,
        }
    }
    fn field(&self, key: &str) -> String {
        if self.path.is_empty() {
            key.to_string()
        } else {
            format!("{}.{key}", self.path)
        }
    }
}

fn key_text(k: Value) -> Result<String, Error> {
    match k {
        Value::String(s) => Ok(s),
        Value::Number(n) => Ok(n.to_string()),
        Value::Bool(b) => Ok(b.to_string()),
        _ => Err(ser::Error::custom("a JSON object key must be a string")),
    }
}

impl<'a> ser::Serializer for Serializer<'a> {
    type Ok = Value;
    type Error = Error;
    type SerializeSeq = Seq<'a>;
    type SerializeTuple = Seq<'a>;
    type SerializeTupleStruct = Seq<'a>;
    type SerializeTupleVariant = Variant<Seq<'a>>;
    type SerializeMap = Obj<'a>;
    type SerializeStruct = Obj<'a>;
    type SerializeStructVariant = Variant<Obj<'a>>;

    fn serialize_bool(self, v: bool) -> Result<Value, Error> {
        Ok(Value::Bool(v))
    }
    fn serialize_i8(self, v: i8) -> Result<Value, Error> {
        Ok(Value::from(v))
    }
    fn serialize_i16(self, v: i16) -> Result<Value, Error> {
        Ok(Value::from(v))
    }
    fn serialize_i32(self, v: i32) -> Result<Value, Error> {
        Ok(Value::from(v))
    }
    fn serialize_i64(self, v: i64) -> Result<Value, Error> {
        Ok(Value::from(v))
    }
    fn serialize_u8(self, v: u8) -> Result<Value, Error> {
        Ok(Value::from(v))
    }
    fn serialize_u16(self, v: u16) -> Result<Value, Error> {
        Ok(Value::from(v))
    }
    fn serialize_u32(self, v: u32) -> Result<Value, Error> {
        Ok(Value::from(v))
    }
    fn serialize_u64(self, v: u64) -> Result<Value, Error> {
        Ok(Value::from(v))
    }
    fn serialize_f32(self, v: f32) -> Result<Value, Error> {
        self.serialize_f64(v as f64)
    }
    /// A finite number as a JSON number; +∞, −∞ and NaN as the strings of
    /// [`NOT_FINITE`], recording the member's path.
    fn serialize_f64(self, v: f64) -> Result<Value, Error> {
        if !v.is_finite() {
            self.found.borrow_mut().push(self.path.clone());
        }
        Ok(number(v))
    }
    fn serialize_char(self, v: char) -> Result<Value, Error> {
        Ok(Value::String(v.to_string()))
    }
    fn serialize_str(self, v: &str) -> Result<Value, Error> {
        Ok(Value::String(v.to_string()))
    }
    fn serialize_bytes(self, v: &[u8]) -> Result<Value, Error> {
        Ok(Value::Array(v.iter().map(|&b| Value::from(b)).collect()))
    }
    fn serialize_none(self) -> Result<Value, Error> {
        Ok(Value::Null)
    }
    fn serialize_some<T: Serialize + ?Sized>(self, v: &T) -> Result<Value, Error> {
        v.serialize(self)
    }
    fn serialize_unit(self) -> Result<Value, Error> {
        Ok(Value::Null)
    }
    fn serialize_unit_struct(self, _: &'static str) -> Result<Value, Error> {
        Ok(Value::Null)
    }
    fn serialize_unit_variant(
        self,
        _: &'static str,
        _: u32,
        v: &'static str,
    ) -> Result<Value, Error> {
        Ok(Value::String(v.to_string()))
    }
    fn serialize_newtype_struct<T: Serialize + ?Sized>(
        self,
        _: &'static str,
        v: &T,
    ) -> Result<Value, Error> {
        v.serialize(self)
    }
    fn serialize_newtype_variant<T: Serialize + ?Sized>(
        self,
        _: &'static str,
        _: u32,
        variant: &'static str,
        v: &T,
    ) -> Result<Value, Error> {
        let inner = v.serialize(self.child(self.field(variant)))?;
        let mut m = Map::new();
        m.insert(variant.to_string(), inner);
        Ok(Value::Object(m))
    }
    fn serialize_seq(self, len: Option<usize>) -> Result<Seq<'a>, Error> {
        Ok(Seq {
            ser: self,
            items: Vec::with_capacity(len.unwrap_or(0)),
        })
    }
    fn serialize_tuple(self, len: usize) -> Result<Seq<'a>, Error> {
        self.serialize_seq(Some(len))
    }
    fn serialize_tuple_struct(self, _: &'static str, len: usize) -> Result<Seq<'a>, Error> {
        self.serialize_seq(Some(len))
    }
    fn serialize_tuple_variant(
        self,
        _: &'static str,
        _: u32,
        variant: &'static str,
        len: usize,
    ) -> Result<Variant<Seq<'a>>, Error> {
        let inner = self.child(self.field(variant)).serialize_seq(Some(len))?;
        Ok(Variant { variant, inner })
    }
    fn serialize_map(self, _: Option<usize>) -> Result<Obj<'a>, Error> {
        Ok(Obj {
            ser: self,
            map: Map::new(),
            key: None,
        })
    }
    fn serialize_struct(self, _: &'static str, len: usize) -> Result<Obj<'a>, Error> {
        self.serialize_map(Some(len))
    }
    fn serialize_struct_variant(
        self,
        _: &'static str,
        _: u32,
        variant: &'static str,
        len: usize,
    ) -> Result<Variant<Obj<'a>>, Error> {
        let inner = self.child(self.field(variant)).serialize_map(Some(len))?;
        Ok(Variant { variant, inner })
    }
}

/// A JSON array being built.
pub struct Seq<'a> {
    ser: Serializer<'a>,
    items: Vec<Value>,
}

impl Seq<'_> {
    fn push<T: Serialize + ?Sized>(&mut self, v: &T) -> Result<(), Error> {
        let path = format!("{}[{}]", self.ser.path, self.items.len());
        self.items.push(v.serialize(self.ser.child(path))?);
        Ok(())
    }
}

impl ser::SerializeSeq for Seq<'_> {
    type Ok = Value;
    type Error = Error;
    fn serialize_element<T: Serialize + ?Sized>(&mut self, v: &T) -> Result<(), Error> {
        self.push(v)
    }
    fn end(self) -> Result<Value, Error> {
        Ok(Value::Array(self.items))
    }
}

impl ser::SerializeTuple for Seq<'_> {
    type Ok = Value;
    type Error = Error;
    fn serialize_element<T: Serialize + ?Sized>(&mut self, v: &T) -> Result<(), Error> {
        self.push(v)
    }
    fn end(self) -> Result<Value, Error> {
        Ok(Value::Array(self.items))
    }
}

impl ser::SerializeTupleStruct for Seq<'_> {
    type Ok = Value;
    type Error = Error;
    fn serialize_field<T: Serialize + ?Sized>(&mut self, v: &T) -> Result<(), Error> {
        self.push(v)
    }
    fn end(self) -> Result<Value, Error> {
        Ok(Value::Array(self.items))
    }
}

/// A JSON object being built.
pub struct Obj<'a> {
    ser: Serializer<'a>,
    map: Map<String, Value>,
    key: Option<String>,
}

impl Obj<'_> {
    fn insert<T: Serialize + ?Sized>(&mut self, key: String, v: &T) -> Result<(), Error> {
        let value = v.serialize(self.ser.child(self.ser.field(&key)))?;
        self.map.insert(key, value);
        Ok(())
    }
}

impl ser::SerializeMap for Obj<'_> {
    type Ok = Value;
    type Error = Error;
    fn serialize_key<T: Serialize + ?Sized>(&mut self, k: &T) -> Result<(), Error> {
        let k = k.serialize(self.ser.child(String::new()))?;
        self.key = Some(key_text(k)?);
        Ok(())
    }
    fn serialize_value<T: Serialize + ?Sized>(&mut self, v: &T) -> Result<(), Error> {
        let key = self
            .key
            .take()
            .ok_or_else(|| <Error as ser::Error>::custom("a map value without its key"))?;
        self.insert(key, v)
    }
    fn end(self) -> Result<Value, Error> {
        Ok(Value::Object(self.map))
    }
}

impl ser::SerializeStruct for Obj<'_> {
    type Ok = Value;
    type Error = Error;
    fn serialize_field<T: Serialize + ?Sized>(
        &mut self,
        key: &'static str,
        v: &T,
    ) -> Result<(), Error> {
        self.insert(key.to_string(), v)
    }
    fn end(self) -> Result<Value, Error> {
        Ok(Value::Object(self.map))
    }
}

/// An enum variant with content: `{"variant": content}`.
pub struct Variant<C> {
    variant: &'static str,
    inner: C,
}

impl ser::SerializeTupleVariant for Variant<Seq<'_>> {
    type Ok = Value;
    type Error = Error;
    fn serialize_field<T: Serialize + ?Sized>(&mut self, v: &T) -> Result<(), Error> {
        self.inner.push(v)
    }
    fn end(self) -> Result<Value, Error> {
        let mut m = Map::new();
        m.insert(self.variant.to_string(), Value::Array(self.inner.items));
        Ok(Value::Object(m))
    }
}

impl ser::SerializeStructVariant for Variant<Obj<'_>> {
    type Ok = Value;
    type Error = Error;
    fn serialize_field<T: Serialize + ?Sized>(
        &mut self,
        key: &'static str,
        v: &T,
    ) -> Result<(), Error> {
        self.inner.insert(key.to_string(), v)
    }
    fn end(self) -> Result<Value, Error> {
        let mut m = Map::new();
        m.insert(self.variant.to_string(), Value::Object(self.inner.map));
        Ok(Value::Object(m))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[derive(serde::Serialize)]
    struct Inner {
        a: f64,
        b: Option<f64>,
        v: Vec<f64>,
    }

    #[derive(serde::Serialize)]
    struct Outer {
        name: &'static str,
        inner: Inner,
        #[serde(flatten)]
        extra: Inner,
        pair: (f64, f64),
    }

    /// The rule of docs/verdicts.md: a non-finite number is a string, listed
    /// by path; finite numbers, `null` and strings are as serde_json writes
    /// them.
    #[test]
    fn non_finite_numbers_become_strings_and_are_listed() {
        let doc = Outer {
            name: "x",
            inner: Inner {
                a: 1.5,
                b: Some(f64::NAN),
                v: vec![0.0, f64::NEG_INFINITY],
            },
            extra: Inner {
                a: f64::INFINITY,
                b: None,
                v: vec![],
            },
            pair: (2.0, f64::NAN),
        };
        let (v, found) = to_value(&doc).unwrap();
        assert_eq!(v["inner"]["a"], 1.5);
        assert_eq!(v["inner"]["b"], "NaN");
        assert_eq!(v["inner"]["v"][1], "-inf");
        assert_eq!(v["a"], "inf");
        assert!(v["b"].is_null());
        assert_eq!(v["pair"][1], "NaN");
        assert_eq!(found, ["inner.b", "inner.v[1]", "a", "pair[1]"]);
        // Same as serde_json for a finite document.
        let finite = Inner {
            a: 1e-300,
            b: None,
            v: vec![3.0],
        };
        assert_eq!(
            to_value(&finite).unwrap().0,
            serde_json::to_value(&finite).unwrap()
        );
        let (text, _) = to_text(&doc).unwrap();
        let back: Value = serde_json::from_str(&text).unwrap();
        assert_eq!(back["not_finite"].as_array().unwrap().len(), 4);
    }
}
