//! The output guard: every number a report holds is finite.
//!
//! serde_json writes a NaN or an infinity as `null`, so once a report is a
//! `serde_json::Value` a non-finite number can no longer be told from a
//! value that does not exist (`None`). The guard therefore walks the report
//! itself, through its `Serialize` implementation, with a serializer that
//! writes nothing: it only follows the field names, sequence indices and map
//! keys, and stops at the first `f32` or `f64` that is not finite, naming
//! the field (`levels[0].density`). An `Option<f64>` that is `None` is never
//! an `f64` to the walker, so a `null` the schema allows passes.

use serde::ser::{self, Serialize};
use std::fmt;

/// A number that is NaN or infinite, and where it sits.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct NonFinite {
    /// Where the number sits: a field path in the report's serde form
    /// (`[0].tranches[1].quote`), or a printed table's title, column and row.
    pub field: String,
    /// What was found: `NaN`, `inf` or `-inf`.
    pub value: String,
}

impl fmt::Display for NonFinite {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{}: expected a finite number, found {}",
            self.field, self.value
        )
    }
}

impl std::error::Error for NonFinite {}

/// Checks that every `f32` and `f64` in `value`'s serde form is finite.
///
/// # Errors
/// The first non-finite number, with its field path.
///
/// ```
/// use skewbook::output::check_finite;
/// #[derive(serde::Serialize)]
/// struct Row { rate: f64, spread: Option<f64>, legs: Vec<f64> }
/// assert!(check_finite(&Row { rate: 0.1, spread: None, legs: vec![1.0] }).is_ok());
/// let bad = Row { rate: 0.1, spread: None, legs: vec![1.0, f64::NAN] };
/// assert_eq!(check_finite(&bad).unwrap_err().field, "legs[1]");
/// ```
pub fn check_finite<T: Serialize + ?Sized>(value: &T) -> Result<(), NonFinite> {
    let mut walker = Walker { path: Vec::new() };
    match value.serialize(&mut walker) {
        Ok(()) => Ok(()),
        Err(WalkError::NonFinite(n)) => Err(n),
        // A Serialize implementation that fails on its own is not a number
        // problem; serde_json will report it when printing.
        Err(WalkError::Custom(_)) => Ok(()),
    }
}

/// One step of a field path.
enum Step {
    Field(&'static str),
    Index(usize),
    Key(String),
}

struct Walker {
    path: Vec<Step>,
}

impl Walker {
    fn path(&self) -> String {
        let mut s = String::new();
        for step in &self.path {
            match step {
                Step::Field(name) => {
                    if !s.is_empty() {
                        s.push('.');
                    }
                    s.push_str(name);
                }
                Step::Key(key) => {
                    if !s.is_empty() {
                        s.push('.');
                    }
                    s.push_str(key);
                }
                Step::Index(i) => s.push_str(&format!("[{i}]")),
            }
        }
        if s.is_empty() {
            "the report".to_string()
        } else {
            s
        }
    }

    fn number(&self, x: f64) -> Result<(), WalkError> {
        if x.is_finite() {
            Ok(())
        } else {
            Err(WalkError::NonFinite(NonFinite {
                field: self.path(),
                value: format!("{x}"),
            }))
        }
    }

    fn within<T: Serialize + ?Sized>(&mut self, step: Step, value: &T) -> Result<(), WalkError> {
        self.path.push(step);
        let r = value.serialize(&mut *self);
        self.path.pop();
        r
    }
}

#[derive(Debug)]
enum WalkError {
    NonFinite(NonFinite),
    Custom(String),
}

impl fmt::Display for WalkError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            WalkError::NonFinite(n) => write!(f, "{n}"),
            WalkError::Custom(m) => write!(f, "{m}"),
        }
    }
}

impl std::error::Error for WalkError {}

impl ser::Error for WalkError {
    fn custom<T: fmt::Display>(msg: T) -> Self {
        WalkError::Custom(msg.to_string())
    }
}

/// A sequence, tuple or map being walked: counts elements for the path.
struct Compound<'a> {
    walker: &'a mut Walker,
    index: usize,
    key: Option<String>,
}

impl Compound<'_> {
    fn element<T: Serialize + ?Sized>(&mut self, value: &T) -> Result<(), WalkError> {
        let i = self.index;
        self.index += 1;
        self.walker.within(Step::Index(i), value)
    }
}

macro_rules! ignore_scalars {
    ($($method:ident: $ty:ty),* $(,)?) => {$(
        fn $method(self, _: $ty) -> Result<(), WalkError> {
            Ok(())
        }
    )*};
}

impl<'a> ser::Serializer for &'a mut Walker {
    type Ok = ();
    type Error = WalkError;
    type SerializeSeq = Compound<'a>;
    type SerializeTuple = Compound<'a>;
    type SerializeTupleStruct = Compound<'a>;
    type SerializeTupleVariant = Compound<'a>;
    type SerializeMap = Compound<'a>;
    type SerializeStruct = Compound<'a>;
    type SerializeStructVariant = Compound<'a>;

    ignore_scalars! {
        serialize_bool: bool, serialize_i8: i8, serialize_i16: i16, serialize_i32: i32,
        serialize_i64: i64, serialize_i128: i128, serialize_u8: u8, serialize_u16: u16,
        serialize_u32: u32, serialize_u64: u64, serialize_u128: u128, serialize_char: char,
        serialize_str: &str, serialize_bytes: &[u8],
    }

    fn serialize_f32(self, v: f32) -> Result<(), WalkError> {
        self.number(f64::from(v))
    }

    fn serialize_f64(self, v: f64) -> Result<(), WalkError> {
        self.number(v)
    }

    fn serialize_none(self) -> Result<(), WalkError> {
        Ok(())
    }

    fn serialize_some<T: Serialize + ?Sized>(self, value: &T) -> Result<(), WalkError> {
        value.serialize(self)
    }

    fn serialize_unit(self) -> Result<(), WalkError> {
        Ok(())
    }

    fn serialize_unit_struct(self, _: &'static str) -> Result<(), WalkError> {
        Ok(())
    }

    fn serialize_unit_variant(
        self,
        _: &'static str,
        _: u32,
        _: &'static str,
    ) -> Result<(), WalkError> {
        Ok(())
    }

    fn serialize_newtype_struct<T: Serialize + ?Sized>(
        self,
        _: &'static str,
        value: &T,
    ) -> Result<(), WalkError> {
        value.serialize(self)
    }

    fn serialize_newtype_variant<T: Serialize + ?Sized>(
        self,
        _: &'static str,
        _: u32,
        variant: &'static str,
        value: &T,
    ) -> Result<(), WalkError> {
        self.within(Step::Field(variant), value)
    }

    fn serialize_seq(self, _: Option<usize>) -> Result<Compound<'a>, WalkError> {
        Ok(Compound {
            walker: self,
            index: 0,
            key: None,
        })
    }

    fn serialize_tuple(self, len: usize) -> Result<Compound<'a>, WalkError> {
        self.serialize_seq(Some(len))
    }

    fn serialize_tuple_struct(
        self,
        _: &'static str,
        len: usize,
    ) -> Result<Compound<'a>, WalkError> {
        self.serialize_seq(Some(len))
    }

    fn serialize_tuple_variant(
        self,
        _: &'static str,
        _: u32,
        variant: &'static str,
        len: usize,
    ) -> Result<Compound<'a>, WalkError> {
        self.path.push(Step::Field(variant));
        self.serialize_seq(Some(len))
    }

    fn serialize_map(self, len: Option<usize>) -> Result<Compound<'a>, WalkError> {
        self.serialize_seq(len)
    }

    fn serialize_struct(self, _: &'static str, len: usize) -> Result<Compound<'a>, WalkError> {
        self.serialize_seq(Some(len))
    }

    fn serialize_struct_variant(
        self,
        _: &'static str,
        _: u32,
        variant: &'static str,
        len: usize,
    ) -> Result<Compound<'a>, WalkError> {
        self.path.push(Step::Field(variant));
        self.serialize_seq(Some(len))
    }
}

/// The compound serializers whose items are unnamed elements: each walks
/// into its element; a variant's pops the variant's name at the end.
macro_rules! element_compound {
    ($trait:ident, $method:ident, $end:expr) => {
        impl ser::$trait for Compound<'_> {
            type Ok = ();
            type Error = WalkError;
            fn $method<T: Serialize + ?Sized>(&mut self, value: &T) -> Result<(), WalkError> {
                self.element(value)
            }
            fn end(self) -> Result<(), WalkError> {
                $end(self);
                Ok(())
            }
        }
    };
}

/// The compound serializers whose items are named fields.
macro_rules! field_compound {
    ($trait:ident, $end:expr) => {
        impl ser::$trait for Compound<'_> {
            type Ok = ();
            type Error = WalkError;
            fn serialize_field<T: Serialize + ?Sized>(
                &mut self,
                name: &'static str,
                value: &T,
            ) -> Result<(), WalkError> {
                self.walker.within(Step::Field(name), value)
            }
            fn end(self) -> Result<(), WalkError> {
                $end(self);
                Ok(())
            }
        }
    };
}

/// Nothing to undo at the end of a sequence, tuple, map or struct.
fn stay(_: Compound<'_>) {}

/// The end of a variant: leave the variant's name.
fn leave_variant(c: Compound<'_>) {
    c.walker.path.pop();
}

element_compound!(SerializeSeq, serialize_element, stay);
element_compound!(SerializeTuple, serialize_element, stay);
element_compound!(SerializeTupleStruct, serialize_field, stay);
element_compound!(SerializeTupleVariant, serialize_field, leave_variant);
field_compound!(SerializeStruct, stay);
field_compound!(SerializeStructVariant, leave_variant);

impl ser::SerializeMap for Compound<'_> {
    type Ok = ();
    type Error = WalkError;
    fn serialize_key<T: Serialize + ?Sized>(&mut self, key: &T) -> Result<(), WalkError> {
        // Keys name the step; a key that is not a string is shown as JSON.
        self.key = Some(match serde_json::to_value(key) {
            Ok(serde_json::Value::String(s)) => s,
            Ok(other) => other.to_string(),
            Err(e) => return Err(WalkError::Custom(e.to_string())),
        });
        Ok(())
    }
    fn serialize_value<T: Serialize + ?Sized>(&mut self, value: &T) -> Result<(), WalkError> {
        let key = self.key.take().unwrap_or_default();
        self.walker.within(Step::Key(key), value)
    }
    fn end(self) -> Result<(), WalkError> {
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde::Serialize;
    use std::collections::BTreeMap;

    #[derive(Serialize)]
    struct Inner {
        value: f64,
        maybe: Option<f64>,
    }

    #[derive(Serialize)]
    struct Flattened {
        name: &'static str,
        #[serde(flatten)]
        inner: Inner,
    }

    #[derive(Serialize)]
    enum Kind {
        Pair(f64, f64),
        Point { x: f64 },
    }

    #[derive(Serialize)]
    struct Outer {
        rows: Vec<Inner>,
        pair: (f64, f64),
        flat: Flattened,
        kinds: Vec<Kind>,
        by_name: BTreeMap<String, f64>,
    }

    fn outer() -> Outer {
        Outer {
            rows: vec![
                Inner {
                    value: 1.0,
                    maybe: None,
                },
                Inner {
                    value: 2.0,
                    maybe: Some(3.0),
                },
            ],
            pair: (0.5, -0.5),
            flat: Flattened {
                name: "x",
                inner: Inner {
                    value: 4.0,
                    maybe: None,
                },
            },
            kinds: vec![Kind::Pair(1.0, 2.0), Kind::Point { x: 3.0 }],
            by_name: BTreeMap::from([("a".to_string(), 1.0)]),
        }
    }

    #[test]
    fn finite_report_with_nulls_passes() {
        assert_eq!(check_finite(&outer()), Ok(()));
    }

    /// Each place a number can hide, poisoned in turn, is found and named.
    #[test]
    fn every_non_finite_number_is_found_and_named() {
        type Poison = fn(&mut Outer);
        let cases: [(Poison, &str, &str); 8] = [
            (|o| o.rows[1].value = f64::NAN, "rows[1].value", "NaN"),
            (
                |o| o.rows[0].maybe = Some(f64::INFINITY),
                "rows[0].maybe",
                "inf",
            ),
            (|o| o.pair.1 = f64::NEG_INFINITY, "pair[1]", "-inf"),
            (|o| o.flat.inner.value = f64::NAN, "flat.value", "NaN"),
            (
                |o| o.kinds[0] = Kind::Pair(1.0, f64::NAN),
                "kinds[0].Pair[1]",
                "NaN",
            ),
            (
                |o| o.kinds[1] = Kind::Point { x: f64::NAN },
                "kinds[1].Point.x",
                "NaN",
            ),
            (
                |o| {
                    o.by_name.insert("b".into(), f64::NAN);
                },
                "by_name.b",
                "NaN",
            ),
            (|o| o.flat.inner.maybe = Some(f64::NAN), "flat.maybe", "NaN"),
        ];
        for (poison, field, value) in cases {
            let mut o = outer();
            poison(&mut o);
            let e = check_finite(&o).unwrap_err();
            assert_eq!((e.field.as_str(), e.value.as_str()), (field, value));
        }
        let top: Vec<f64> = vec![1.0, f64::NAN];
        assert_eq!(check_finite(&top).unwrap_err().field, "[1]");
        assert_eq!(check_finite(&f64::NAN).unwrap_err().field, "the report");
        assert!(check_finite(&f32::INFINITY).is_err());
    }
}
