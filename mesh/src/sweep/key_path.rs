//! Editing a geometry's TOML document by a dotted key.
//!
//! A key is a list of segments separated by dots, walked from the top of the document:
//! in a table a segment names a key; in an array a segment is a 0-based index, or, when
//! the array holds tables (`[[load]]`, `[[port]]`), the `name` of an entry. So
//! `cavity.size.2` is the third element of `[cavity] size` and `load.water.center` the
//! `center` of the load named "water". The last segment may name a key the table does not
//! hold yet (an optional key such as `angle_deg`); every other segment must exist.

use toml::{Table, Value};

/// One step into a value; `Err` says why the step is impossible.
fn step_mut<'a>(v: &'a mut Value, seg: &str, path: &str) -> Result<&'a mut Value, String> {
    match v {
        Value::Table(t) => t
            .get_mut(seg)
            .ok_or_else(|| format!("\"{path}\" has no key \"{seg}\"")),
        Value::Array(a) => {
            let i = index_in(a, seg, path)?;
            Ok(&mut a[i])
        }
        other => Err(format!(
            "\"{path}\" is a {} and has no parts (\"{seg}\")",
            other.type_str()
        )),
    }
}

/// Index of `seg` in an array: a number, or the `name` of a table entry.
fn index_in(a: &[Value], seg: &str, path: &str) -> Result<usize, String> {
    if let Ok(i) = seg.parse::<usize>() {
        return if i < a.len() {
            Ok(i)
        } else {
            Err(format!(
                "index {i} is past the end of \"{path}\" ({} elements)",
                a.len()
            ))
        };
    }
    let names: Vec<&str> = a
        .iter()
        .filter_map(|e| e.get("name").and_then(Value::as_str))
        .collect();
    a.iter()
        .position(|e| e.get("name").and_then(Value::as_str) == Some(seg))
        .ok_or_else(|| {
            if names.is_empty() {
                format!("\"{path}\" has no entry \"{seg}\" (it is indexed by number)")
            } else {
                format!(
                    "\"{path}\" has no entry named \"{seg}\" (entries: {})",
                    names.join(", ")
                )
            }
        })
}

/// Splits a key into segments; empty segments are refused.
fn segments(key: &str) -> Result<Vec<&str>, String> {
    let segs: Vec<&str> = key.split('.').collect();
    if segs.iter().any(|s| s.trim().is_empty()) {
        return Err("empty segment (two dots in a row, or a dot at an end)".into());
    }
    Ok(segs)
}

/// The value at `key`, or `None` when only the last segment is missing from its table
/// (it may be created by [`set`]).
pub fn get<'a>(root: &'a Table, key: &str) -> Result<Option<&'a Value>, String> {
    // Walking immutably mirrors `set`; clone-free through a shared reference.
    let segs = segments(key)?;
    let mut path = String::new();
    let mut cur: Option<&Value> = None;
    for (k, seg) in segs.iter().enumerate() {
        let last = k + 1 == segs.len();
        let next = match cur {
            None => root.get(*seg),
            Some(Value::Table(t)) => t.get(*seg),
            Some(Value::Array(a)) => Some(&a[index_in(a, seg, &path)?]),
            Some(other) => {
                return Err(format!(
                    "\"{path}\" is a {} and has no parts (\"{seg}\")",
                    other.type_str()
                ))
            }
        };
        match next {
            Some(v) => cur = Some(v),
            None if last && !matches!(cur, Some(Value::Array(_))) => return Ok(None),
            None if path.is_empty() => return Err(format!("no table or key \"{seg}\"")),
            None => return Err(format!("\"{path}\" has no key \"{seg}\"")),
        }
        if !path.is_empty() {
            path.push('.');
        }
        path.push_str(seg);
    }
    Ok(cur)
}

/// Sets the value at `key` (see the module docs for the path rules).
pub fn set(root: &mut Table, key: &str, value: Value) -> Result<(), String> {
    let segs = segments(key)?;
    let (last, parents) = segs
        .split_last()
        .expect("split yields one segment at least");
    let mut path = String::new();
    let mut cur: Option<&mut Value> = None;
    for seg in parents {
        let next = match cur {
            None => root
                .get_mut(*seg)
                .ok_or_else(|| format!("no table or key \"{seg}\""))?,
            Some(v) => step_mut(v, seg, &path)?,
        };
        cur = Some(next);
        if !path.is_empty() {
            path.push('.');
        }
        path.push_str(seg);
    }
    match cur {
        None => {
            root.insert((*last).to_string(), value);
        }
        Some(Value::Table(t)) => {
            t.insert((*last).to_string(), value);
        }
        Some(v) => *step_mut(v, last, &path)? = value,
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    const DOC: &str = r#"
[cavity]
shape = "box"
size = [300.0, 300.0, 200.0]
[[load]]
name = "water"
center = [150.0, 150.0]
[[load]]
name = "plate"
"#;

    fn doc() -> Table {
        DOC.parse().unwrap()
    }

    #[test]
    fn array_index_and_entry_by_name() {
        let mut t = doc();
        set(&mut t, "cavity.size.2", Value::Float(210.0)).unwrap();
        assert_eq!(t["cavity"]["size"][2].as_float(), Some(210.0));
        let c = Value::Array(vec![Value::Float(160.0), Value::Float(120.0)]);
        set(&mut t, "load.water.center", c.clone()).unwrap();
        assert_eq!(t["load"][0]["center"], c);
        set(&mut t, "load.1.name", Value::String("tray".into())).unwrap();
        assert_eq!(
            get(&t, "load.tray.name").unwrap().unwrap().as_str(),
            Some("tray")
        );
    }

    #[test]
    fn optional_last_key_is_created_but_paths_must_exist() {
        let mut t = doc();
        assert_eq!(get(&t, "load.water.angle_deg").unwrap(), None);
        set(&mut t, "load.water.angle_deg", Value::Float(30.0)).unwrap();
        assert_eq!(t["load"][0]["angle_deg"].as_float(), Some(30.0));
        let e = set(&mut t, "load.soup.center", Value::Float(1.0)).unwrap_err();
        assert!(e.contains("water, plate"), "{e}");
        let e = get(&t, "cavity.size.3").unwrap_err();
        assert!(e.contains("past the end"), "{e}");
        let e = get(&t, "cavity.shape.x").unwrap_err();
        assert!(e.contains("string"), "{e}");
        assert!(get(&t, "cavity..size").is_err());
        assert!(get(&t, "mesh.order").is_err());
    }
}
