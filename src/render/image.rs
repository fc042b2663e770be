//! An RGBA raster image (8 bits per channel, sRGB) and its PNG encoding.

use super::error::RenderError;

/// The largest image side accepted, in pixels. Keeps allocations bounded when
/// a size comes from the command line.
pub const MAX_SIDE: u32 = 16_384;

/// A raster image: `width` x `height` pixels, row-major from the top-left,
/// four bytes per pixel (red, green, blue, alpha; sRGB, straight alpha).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Image {
    /// Width in pixels.
    pub width: u32,
    /// Height in pixels.
    pub height: u32,
    /// Pixel bytes, `width * height * 4`, row-major from the top-left.
    pub rgba: Vec<u8>,
}

impl Image {
    /// An image filled with `background` (RGBA).
    ///
    /// Sides must be in `1..=MAX_SIDE`.
    pub fn new(width: u32, height: u32, background: [u8; 4]) -> Result<Image, RenderError> {
        check_size(width, height)?;
        let n = width as usize * height as usize;
        let mut rgba = Vec::with_capacity(n * 4);
        for _ in 0..n {
            rgba.extend_from_slice(&background);
        }
        Ok(Image {
            width,
            height,
            rgba,
        })
    }

    /// Checks that the buffer length matches the size.
    pub fn check(&self) -> Result<(), RenderError> {
        check_size(self.width, self.height)?;
        let expected = self.width as usize * self.height as usize * 4;
        if self.rgba.len() != expected {
            return Err(RenderError::BufferLength {
                expected,
                got: self.rgba.len(),
            });
        }
        Ok(())
    }

    /// Byte offset of pixel (x, y), or `None` outside the image.
    fn offset(&self, x: u32, y: u32) -> Option<usize> {
        if x < self.width && y < self.height {
            let i = (y as usize * self.width as usize + x as usize) * 4;
            (i + 4 <= self.rgba.len()).then_some(i)
        } else {
            None
        }
    }

    /// The pixel at (x, y), or `None` outside the image.
    pub fn get(&self, x: u32, y: u32) -> Option<[u8; 4]> {
        let i = self.offset(x, y)?;
        Some([
            self.rgba[i],
            self.rgba[i + 1],
            self.rgba[i + 2],
            self.rgba[i + 3],
        ])
    }

    /// Sets pixel (x, y). Pixels outside the image are ignored, so shapes
    /// that cross the border are clipped.
    pub fn set(&mut self, x: u32, y: u32, rgba: [u8; 4]) {
        if let Some(i) = self.offset(x, y) {
            self.rgba[i..i + 4].copy_from_slice(&rgba);
        }
    }

    /// Draws `rgba` over pixel (x, y) with its alpha ("source over", computed
    /// on the stored sRGB bytes, as most viewers composite). Pixels outside
    /// the image are ignored.
    pub fn blend(&mut self, x: u32, y: u32, rgba: [u8; 4]) {
        let Some(i) = self.offset(x, y) else {
            return;
        };
        let sa = rgba[3] as f64 / 255.0;
        let da = self.rgba[i + 3] as f64 / 255.0;
        let out_a = sa + da * (1.0 - sa);
        if out_a <= 0.0 {
            self.rgba[i..i + 4].copy_from_slice(&[0, 0, 0, 0]);
            return;
        }
        for (dst, &src) in self.rgba[i..i + 3].iter_mut().zip(&rgba[..3]) {
            let v = (src as f64 * sa + *dst as f64 * da * (1.0 - sa)) / out_a;
            *dst = v.round().clamp(0.0, 255.0) as u8;
        }
        self.rgba[i + 3] = (out_a * 255.0).round().clamp(0.0, 255.0) as u8;
    }

    /// Copies `other` into this image with its top-left corner at (x, y),
    /// clipped to this image.
    pub fn paste(&mut self, other: &Image, x: u32, y: u32) {
        for oy in 0..other.height {
            let ty = y.saturating_add(oy);
            if ty >= self.height {
                break;
            }
            for ox in 0..other.width {
                let tx = x.saturating_add(ox);
                if tx >= self.width {
                    break;
                }
                if let Some(p) = other.get(ox, oy) {
                    self.set(tx, ty, p);
                }
            }
        }
    }

    /// The image mirrored left to right.
    pub fn flipped_horizontally(&self) -> Image {
        let mut out = self.clone();
        for y in 0..self.height {
            for x in 0..self.width {
                if let Some(p) = self.get(self.width - 1 - x, y) {
                    out.set(x, y, p);
                }
            }
        }
        out
    }

    /// Encodes the image as an 8-bit PNG: RGB when every pixel is opaque
    /// (a quarter fewer bytes to compress, the same pixels), RGBA otherwise.
    pub fn encode_png(&self) -> Result<Vec<u8>, RenderError> {
        self.encode(None)
    }

    /// [`Image::encode_png`] with the resolution stored in the file's pHYs
    /// chunk (PNG, ISO/IEC 15948:2004, 11.3.5.3: pixels per metre), so that
    /// page-layout programs place it at `dpi` dots per inch.
    pub fn encode_png_dpi(&self, dpi: f64) -> Result<Vec<u8>, RenderError> {
        self.encode(Some(dpi))
    }

    fn encode(&self, dpi: Option<f64>) -> Result<Vec<u8>, RenderError> {
        self.check()?;
        let opaque = self.rgba.chunks_exact(4).all(|p| p[3] == 255);
        let rgb: Vec<u8>;
        let (colour, data) = if opaque {
            rgb = self
                .rgba
                .chunks_exact(4)
                .flat_map(|p| [p[0], p[1], p[2]])
                .collect();
            (png::ColorType::Rgb, rgb.as_slice())
        } else {
            (png::ColorType::Rgba, self.rgba.as_slice())
        };
        let mut out = Vec::new();
        {
            let mut encoder = png::Encoder::new(&mut out, self.width, self.height);
            encoder.set_color(colour);
            encoder.set_depth(png::BitDepth::Eight);
            encoder.set_compression(png::Compression::Balanced);
            if let Some(dpi) = dpi {
                // 1 inch = 0.0254 m exactly.
                let per_metre = (dpi / 0.0254).round() as u32;
                encoder.set_pixel_dims(Some(png::PixelDimensions {
                    xppu: per_metre,
                    yppu: per_metre,
                    unit: png::Unit::Meter,
                }));
            }
            let mut writer = encoder
                .write_header()
                .map_err(|e| RenderError::Png(e.to_string()))?;
            writer
                .write_image_data(data)
                .map_err(|e| RenderError::Png(e.to_string()))?;
            writer
                .finish()
                .map_err(|e| RenderError::Png(e.to_string()))?;
        }
        Ok(out)
    }
}

/// Checks that both sides are in `1..=MAX_SIDE`.
fn check_size(width: u32, height: u32) -> Result<(), RenderError> {
    if width == 0 || height == 0 {
        return Err(RenderError::ZeroSize { width, height });
    }
    if width > MAX_SIDE || height > MAX_SIDE {
        return Err(RenderError::TooLarge {
            width,
            height,
            max: MAX_SIDE,
        });
    }
    Ok(())
}
