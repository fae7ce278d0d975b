//! Two things done to whole tables beside generating them: a deep copy that shares no
//! buffers (for steps that modify their input), and a content fingerprint that hashes the
//! values in row order whatever the chunking, so outputs built different ways compare.

use polars::prelude::*;
use xxhash_rust::xxh3::Xxh3;

/// A copy of a table that shares no buffers with it (for steps that modify their input).
pub fn deep_copy(df: &DataFrame) -> DataFrame {
    let idx: Vec<IdxSize> = (0..df.height() as IdxSize).collect();
    let cols: Vec<Column> = df
        .columns()
        .iter()
        .map(|c| match c.as_materialized_series().take_slice(&idx) {
            Ok(s) => s.into_column(),
            Err(_) => c.clone(),
        })
        .collect();
    DataFrame::new(df.height(), cols).unwrap_or_else(|_| df.clone())
}

/// A hash of a table's contents in row order: column names, dtypes, values and nulls.
/// Independent of chunking; categorical columns are hashed by their text.
pub fn fingerprint(df: &DataFrame) -> String {
    let mut h = Xxh3::new();
    h.update(&(df.height() as u64).to_le_bytes());
    for col in df.columns() {
        h.update(col.name().as_bytes());
        h.update(&[0xff]);
        h.update(col.dtype().to_string().as_bytes());
        h.update(&[0xfe]);
        hash_series(&mut h, col.as_materialized_series());
    }
    format!("{:016x}", h.digest())
}

fn hash_series(h: &mut Xxh3, s: &Series) {
    // Whether values carry a null tag is decided once for the whole column, so the hash
    // does not depend on how the column is split into chunks.
    let tagged = s.null_count() > 0;
    macro_rules! prim {
        ($ca:expr) => {{
            for arr in $ca.downcast_iter() {
                if !tagged {
                    for v in arr.values().iter() {
                        h.update(&v.to_le_bytes());
                    }
                } else {
                    for v in arr.iter() {
                        match v {
                            Some(x) => {
                                h.update(&[1]);
                                h.update(&x.to_le_bytes());
                            }
                            None => h.update(&[0]),
                        }
                    }
                }
            }
        }};
    }
    match s.dtype() {
        DataType::Categorical(..) | DataType::Enum(..) => match s.cast(&DataType::String) {
            Ok(t) => hash_series(h, &t),
            Err(_) => h.update(b"?"),
        },
        DataType::String => {
            if let Ok(ca) = s.str() {
                for v in ca.iter() {
                    match v {
                        Some(x) => {
                            h.update(&(x.len() as u64 + 1).to_le_bytes());
                            h.update(x.as_bytes());
                        }
                        None => h.update(&0u64.to_le_bytes()),
                    }
                }
            }
        }
        DataType::Boolean => {
            if let Ok(ca) = s.bool() {
                for v in ca.iter() {
                    h.update(&[match v {
                        None => 0,
                        Some(false) => 1,
                        Some(true) => 2,
                    }]);
                }
            }
        }
        dt if dt.is_primitive_numeric() || dt.is_temporal() => {
            let phys = s.to_physical_repr();
            match phys.dtype() {
                DataType::Int64 => prim!(phys.i64().expect("checked dtype")),
                DataType::Int32 => prim!(phys.i32().expect("checked dtype")),
                DataType::UInt32 => prim!(phys.u32().expect("checked dtype")),
                DataType::UInt64 => prim!(phys.u64().expect("checked dtype")),
                DataType::Float64 => prim!(phys.f64().expect("checked dtype")),
                DataType::Float32 => prim!(phys.f32().expect("checked dtype")),
                _ => hash_any(h, &phys),
            }
        }
        _ => hash_any(h, s),
    }
}

fn hash_any(h: &mut Xxh3, s: &Series) {
    for v in s.iter() {
        let t = v.to_string();
        h.update(&(t.len() as u64).to_le_bytes());
        h.update(t.as_bytes());
    }
}
