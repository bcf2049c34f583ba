//! PNG images (the window's plot), encoded with the `png` crate and written atomically.

use std::path::Path;

/// Encode an 8-bit RGBA image (rows top to bottom, `width × height × 4` bytes, alpha not premultiplied) as PNG.
pub fn png_bytes(width: u32, height: u32, rgba: &[u8]) -> Result<Vec<u8>, String> {
    if width == 0 || height == 0 || rgba.len() != width as usize * height as usize * 4 {
        return Err(format!(
            "an image of {width}×{height} pixels needs {} bytes, not {}",
            width as u64 * height as u64 * 4,
            rgba.len()
        ));
    }
    let mut out = Vec::new();
    let mut encoder = png::Encoder::new(&mut out, width, height);
    encoder.set_color(png::ColorType::Rgba);
    encoder.set_depth(png::BitDepth::Eight);
    let mut writer = encoder.write_header().map_err(|e| e.to_string())?;
    writer.write_image_data(rgba).map_err(|e| e.to_string())?;
    writer.finish().map_err(|e| e.to_string())?;
    Ok(out)
}

/// Encode an RGBA image as PNG and write it atomically (a crash leaves the old file or the new one).
pub fn write_png(path: &Path, width: u32, height: u32, rgba: &[u8]) -> Result<(), String> {
    let bytes = png_bytes(width, height, rgba)?;
    super::write_atomically(path, &bytes).map_err(|e| format!("{}: cannot write: {e}", path.display()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn encoded_image_decodes_to_the_same_pixels() {
        let (w, h) = (3u32, 2u32);
        let rgba: Vec<u8> = (0..w * h * 4).map(|i| (i * 11 % 256) as u8).collect();
        let bytes = png_bytes(w, h, &rgba).unwrap();
        let decoder = png::Decoder::new(std::io::Cursor::new(bytes));
        let mut reader = decoder.read_info().unwrap();
        let mut buf = vec![0; reader.output_buffer_size().unwrap()];
        let info = reader.next_frame(&mut buf).unwrap();
        assert_eq!((info.width, info.height), (w, h));
        assert_eq!(&buf[..info.buffer_size()], &rgba[..]);
        assert!(png_bytes(2, 2, &rgba).is_err());
    }
}
