//! Text and categorical columns from a pool of words and each row's pool rank, built
//! without making every row's string.
//!
//! A newcomer must know: a text column is a view array whose words longer than 12 bytes
//! live once in a single shared buffer (each row holds a 16-byte view of its word), so a
//! row costs one 16-byte copy, done in parallel; a categorical column registers the pool's
//! words once and gives each row its word's category id. Both hold exactly the values of
//! building each row's string and collecting them (unit test below).

use polars::prelude::*;
use polars_arrow::array::{Utf8ViewArray, View};
use polars_arrow::bitmap::Bitmap;
use polars_arrow::datatypes::ArrowDataType;
use rayon::prelude::*;

use super::fill::GRAIN;

/// The pool's words as views: each word longer than 12 bytes is copied once into the
/// returned buffer, and its view points there (None when the words would not fit the
/// views' 32-bit offsets).
pub fn pool_views(pool: &[String]) -> Option<(Vec<View>, Vec<u8>)> {
    let long: usize = pool.iter().filter(|w| w.len() > View::MAX_INLINE_SIZE as usize).map(String::len).sum();
    if long > u32::MAX as usize {
        return None;
    }
    let mut buffer: Vec<u8> = Vec::with_capacity(long);
    let views = pool
        .iter()
        .map(|w| {
            let offset = buffer.len() as u32;
            if w.len() > View::MAX_INLINE_SIZE as usize {
                buffer.extend_from_slice(w.as_bytes());
            }
            View::new_from_bytes(w.as_bytes(), 0, offset)
        })
        .collect();
    Some((views, buffer))
}

/// A text column from rows' views of the pool made by [`pool_views`] (with its buffer).
pub fn text_from_views(name: PlSmallStr, views: Vec<View>, buffer: Vec<u8>, valid: Option<Bitmap>) -> Series {
    let buffers = if buffer.is_empty() { Vec::new() } else { vec![buffer.into()] };
    // SAFETY: every view is a copy of one `pool_views` made by `View::new_from_bytes` from a
    // valid UTF-8 word, and its offset points at that word's bytes in buffer 0 (words of up
    // to 12 bytes are inline).
    let arr = unsafe { Utf8ViewArray::new_unchecked_unknown_md(ArrowDataType::Utf8View, views.into(), buffers.into(), valid, None) };
    StringChunked::with_chunk(name, arr).into_series()
}

/// A text column: row i holds `pool[ranks[i] % pool.len()]` (null where `valid` says so).
pub fn text(name: PlSmallStr, pool: &[String], ranks: &[u64], valid: Option<Bitmap>) -> Series {
    let p = pool.len() as u64;
    let Some((views_of_pool, buffer)) = pool_views(pool) else {
        // Views address their buffer with 32-bit offsets: fall back to one string per row.
        let ca: StringChunked = match &valid {
            Some(bm) => ranks.iter().zip(bm.iter()).map(|(&k, ok)| ok.then(|| pool[(k % p) as usize].as_str())).collect(),
            None => ranks.iter().map(|&k| Some(pool[(k % p) as usize].as_str())).collect(),
        };
        return ca.with_name(name).into_series();
    };
    let views: Vec<View> = ranks.par_iter().with_min_len(GRAIN).map(|&k| views_of_pool[(k % p) as usize]).collect();
    text_from_views(name, views, buffer, valid)
}

/// The categorical dtype columns are made with (the global categories) and the pool's words'
/// ids in it, registered once.
pub fn register(pool: &[String]) -> PolarsResult<(DataType, Vec<u32>)> {
    let dtype = DataType::from_categories(Categories::global());
    let DataType::Categorical(_, mapping) = &dtype else { unreachable!("from_categories gives a categorical dtype") };
    let ids: Vec<u32> = pool.iter().map(|w| mapping.insert_cat(w)).collect::<PolarsResult<_>>()?;
    Ok((dtype, ids))
}

/// A categorical column from rows' ids, each one that [`register`] gave for `dtype`.
pub fn category_from_ids(name: PlSmallStr, dtype: &DataType, codes: Vec<u32>, valid: Option<Bitmap>) -> PolarsResult<Series> {
    let phys = UInt32Chunked::from_vec_validity(name, codes, valid);
    if dtype.cat_physical()? == CategoricalPhysical::U32 {
        // SAFETY: every id was given by `insert_cat` on this dtype's categories, so it is in
        // range; the dtype is categorical with 32-bit ids. (The checked constructor looks
        // every row's id up in the mapping again.)
        return Ok(unsafe { Categorical32Chunked::from_cats_and_dtype_unchecked(phys, dtype.clone()) }.into_series());
    }
    let phys = phys.into_series().cast(&DataType::from(dtype.cat_physical()?))?;
    Series::from_cats_and_dtype(&phys, dtype, false)
}

/// A categorical column straight from pool ranks: the pool's words are registered once and
/// each row gets its word's category id, so no row's text is built or hashed.
pub fn category(name: PlSmallStr, pool: &[String], ranks: &[u64], valid: Option<Bitmap>) -> PolarsResult<Series> {
    let (dtype, ids) = register(pool)?;
    let p = ids.len() as u64;
    let codes: Vec<u32> = ranks.par_iter().with_min_len(GRAIN).map(|&k| ids[(k % p) as usize]).collect();
    category_from_ids(name, &dtype, codes, valid)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn views_hold_the_same_values_as_strings_built_per_row() {
        let pool: Vec<String> = ["fig", "a-much-longer-word-than-twelve", "pear", "cherry-orchard-north"].iter().map(|s| s.to_string()).collect();
        let ranks: Vec<u64> = (0..100_000u64).map(|i| (i * 7919) % 5).collect();
        let valid = Bitmap::from_iter((0..100_000).map(|i| i % 11 != 0));
        let got = text("w".into(), &pool, &ranks, Some(valid.clone()));
        let want: StringChunked = ranks.iter().zip(valid.iter()).map(|(&k, ok)| ok.then(|| pool[(k % 4) as usize].as_str())).collect();
        assert!(got.equals_missing(&want.with_name("w".into()).into_series()));
        let cat = category("w".into(), &pool, &ranks, Some(valid)).expect("categorical");
        assert!(cat.cast(&DataType::String).expect("cast").equals_missing(&got));
    }
}
