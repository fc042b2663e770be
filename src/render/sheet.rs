//! Contact sheets: several pictures laid out on a grid in one image.

use super::error::RenderError;
use super::image::Image;

/// Lays `images` out row by row, `columns` per row (at least 1), each in a
/// cell as large as the largest image, centred in its cell, with `gap` pixels
/// between cells and around the edge, on `background` (RGBA).
pub fn contact_sheet(
    images: &[&Image],
    columns: u32,
    gap: u32,
    background: [u8; 4],
) -> Result<Image, RenderError> {
    if images.is_empty() {
        return Err(RenderError::NoImages);
    }
    for image in images {
        image.check()?;
    }
    let columns = columns.clamp(1, images.len() as u32);
    let rows = (images.len() as u32).div_ceil(columns);
    let cell_w = images.iter().map(|i| i.width).max().unwrap_or(1);
    let cell_h = images.iter().map(|i| i.height).max().unwrap_or(1);
    let side = |cells: u32, cell: u32| -> u32 {
        (cells as u64 * cell as u64 + (cells as u64 + 1) * gap as u64).min(u32::MAX as u64) as u32
    };
    let mut sheet = Image::new(side(columns, cell_w), side(rows, cell_h), background)?;
    for (k, image) in images.iter().enumerate() {
        let (col, row) = (k as u32 % columns, k as u32 / columns);
        let x = gap + col * (cell_w + gap) + (cell_w - image.width) / 2;
        let y = gap + row * (cell_h + gap) + (cell_h - image.height) / 2;
        sheet.paste(image, x, y);
    }
    Ok(sheet)
}
