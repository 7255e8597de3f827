import { readFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { crc32 as zlibCrc32, deflateSync } from 'node:zlib'
import { Jimp } from 'jimp'
import { describe, expect, it } from 'vitest'
import {
  DEFAULT_DECODE_LIMITS,
  ImageDecodeError,
  decodeFrame,
  decodeImage,
  probeImage,
  sniffFormat,
  tiffPixelSize,
} from '../../../shared/imageio/decodeImage'
import { encodeGrayPng } from '../../../shared/imageio/encodePng'
import { encodeTiff } from '../../../shared/imageio/encodeTiff'
import { crc32 } from '../../../shared/imageio/readPngHeader'
import { inflateBounded, lzwDecodeBounded, packBitsDecodeBounded } from '../../../shared/imageio/registerBoundedTiffDecoders'

const fixture = (name: string) => new Uint8Array(readFileSync(fileURLToPath(new URL(`../../fixtures/${name}`, import.meta.url))))

/** Expect `promise` to reject with an ImageDecodeError of this code and status whose message names the file. */
async function expectDecodeError(promise: Promise<unknown>, code: ImageDecodeError['code'], status: number, fileName: string) {
  const error = await promise.then(
    () => null,
    (err: unknown) => err,
  )
  expect(error).toBeInstanceOf(ImageDecodeError)
  const e = error as ImageDecodeError
  expect({ code: e.code, status: e.status, fileName: e.fileName }).toEqual({ code, status, fileName })
  expect(e.message).toContain(`"${fileName}"`)
  return e
}

// Hand-built TIFF files, for layouts encodeTiff does not write (big-endian, RGB, hostile chains).

type Entry = [tag: number, type: 3 | 4 | 5 | 2, values: number[]]

/**
 * A classic TIFF with the given IFDs, each listing its own entries; `data` is placed right after the header, so a
 * strip offset of 8 points at it. `nextOverride` replaces the next-IFD offset of the last IFD (to build loops).
 */
function handTiff(ifds: Entry[][], data: Uint8Array, options: { littleEndian?: boolean; nextOverride?: number } = {}): Uint8Array {
  const le = options.littleEndian ?? true
  const size = { 2: 1, 3: 2, 4: 4, 5: 8 } as const
  const valueBytes = (e: Entry) => size[e[1]] * (e[1] === 5 ? e[2].length / 2 : e[2].length)
  let length = 8 + data.length + (data.length % 2)
  const ifdOffsets = ifds.map((entries) => {
    const at = length
    length += 2 + entries.length * 12 + 4
    for (const e of entries) if (valueBytes(e) > 4) length += valueBytes(e) + (valueBytes(e) % 2)
    return at
  })
  const out = new Uint8Array(length)
  const view = new DataView(out.buffer)
  out.set(le ? [0x49, 0x49] : [0x4d, 0x4d])
  view.setUint16(2, 42, le)
  view.setUint32(4, ifdOffsets[0], le)
  out.set(data, 8)
  ifds.forEach((entries, k) => {
    const at = ifdOffsets[k]
    let extra = at + 2 + entries.length * 12 + 4
    view.setUint16(at, entries.length, le)
    entries.forEach((e, i) => {
      const p = at + 2 + i * 12
      view.setUint16(p, e[0], le)
      view.setUint16(p + 2, e[1], le)
      view.setUint32(p + 4, e[1] === 5 ? e[2].length / 2 : e[2].length, le)
      let target = p + 8
      if (valueBytes(e) > 4) {
        view.setUint32(p + 8, extra, le)
        target = extra
        extra += valueBytes(e) + (valueBytes(e) % 2)
      }
      e[2].forEach((v, j) => {
        if (e[1] === 2) out[target + j] = v
        else if (e[1] === 3) view.setUint16(target + 2 * j, v, le)
        else view.setUint32(target + 4 * j, v, le)
      })
    })
    const next = k + 1 < ifds.length ? ifdOffsets[k + 1] : (options.nextOverride ?? 0)
    view.setUint32(at + 2 + entries.length * 12, next, le)
  })
  return out
}

/** Entries of a width × height uncompressed greyscale page whose single strip is at byte 8. */
function greyEntries(width: number, height: number, bits: number, extra: Entry[] = []): Entry[] {
  const entries: Entry[] = [
    [256, 4, [width]],
    [257, 4, [height]],
    [258, 3, [bits]],
    [259, 3, [1]],
    [262, 3, [1]],
    [273, 4, [8]],
    [277, 3, [1]],
    [278, 4, [height]],
    [279, 4, [(width * height * bits) / 8]],
    ...extra,
  ]
  return entries.sort((a, b) => a[0] - b[0])
}

function withEntry(entries: Entry[], replacement: Entry): Entry[] {
  return [...entries.filter((e) => e[0] !== replacement[0]), replacement].sort((a, b) => a[0] - b[0])
}

/** A PNG built chunk by chunk: signature, IHDR, one IDAT with `idat`, IEND (CRCs from node:zlib). */
function handPng(width: number, height: number, idat: Uint8Array, colorType = 0, bitDepth = 8): Uint8Array {
  const chunk = (type: string, body: Uint8Array) => {
    const out = new Uint8Array(12 + body.length)
    const view = new DataView(out.buffer)
    view.setUint32(0, body.length)
    out.set(new TextEncoder().encode(type), 4)
    out.set(body, 8)
    view.setUint32(8 + body.length, zlibCrc32(out.subarray(4, 8 + body.length)))
    return out
  }
  const ihdr = new Uint8Array(13)
  const view = new DataView(ihdr.buffer)
  view.setUint32(0, width)
  view.setUint32(4, height)
  ihdr.set([bitDepth, colorType, 0, 0, 0], 8)
  const signature = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a])
  const parts = [signature, chunk('IHDR', ihdr), chunk('IDAT', idat), chunk('IEND', new Uint8Array(0))]
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0))
  let at = 0
  for (const p of parts) {
    out.set(p, at)
    at += p.length
  }
  return out
}

describe('sniffFormat', () => {
  it.each([
    ['PNG signature', [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0], 'png'],
    ['JPEG SOI + marker', [0xff, 0xd8, 0xff, 0xe0], 'jpeg'],
    ['little-endian TIFF', [0x49, 0x49, 0x2a, 0x00, 8, 0, 0, 0], 'tiff'],
    ['big-endian TIFF', [0x4d, 0x4d, 0x00, 0x2a, 0, 0, 0, 8], 'tiff'],
    ['BigTIFF (version 43)', [0x49, 0x49, 0x2b, 0x00, 8, 0, 0, 0], null],
    ['text', [...new TextEncoder().encode('frame,field_mT\n')], null],
    ['two bytes', [0xff, 0xd8], null],
  ])('When the bytes are %s, then the format is %s', (_, bytes, expected) => {
    expect(sniffFormat(new Uint8Array(bytes))).toBe(expected)
  })
})

describe('decodeImage of TIFF written by outside writers', () => {
  // Outside writer: tifffile 2023.2.3 (Debian bookworm python3-tifffile) via scripts/fixtures/makeTiffFixture.py;
  // zlib (Deflate) compression, XResolution = YResolution = 10000/1, ResolutionUnit 3. Pixel formula from the script.
  it('When the tifffile 3-page 16-bit zlib fixture is decoded, then every pixel equals the writer formula', async () => {
    const { header, frames } = await decodeImage(fixture('tifffile-3page-16bit.tif'), 'tifffile-3page-16bit.tif')
    expect(header).toMatchObject({ format: 'tiff', mediaType: 'image/tiff', width: 32, height: 24, frameCount: 3 })
    expect(header).toMatchObject({ bitDepth: 16, sampleFormat: 'uint' })
    for (let p = 0; p < 3; p++) {
      expect(frames[p].data).toBeInstanceOf(Uint16Array)
      const expected = Uint16Array.from({ length: 32 * 24 }, (_, i) => (p * 20011 + Math.floor(i / 32) * 1009 + (i % 32) * 37) % 65536)
      expect(frames[p].data).toEqual(expected)
    }
  })

  // METHODS.md check #56 [D] (tag semantics [R], TIFF 6.0 via METHODS §9.1): XResolution 10000/1 px per cm → 1.000 µm/px,
  // here as written by tifffile 2023.2.3.
  it('When tifffile wrote 10000 px/cm, then the pixel size is 1000 nm from the resolution tags', async () => {
    const header = await probeImage(fixture('tifffile-3page-16bit.tif'), 'tifffile-3page-16bit.tif')
    expect(header.pixelSizeNm).toBeCloseTo(1000, 9)
    expect(header.pixelSizeSource).toBe('tiff-resolution')
  })

  // Outside writer: Pillow 9.4.0 (Debian bookworm python3-pil), compression='tiff_lzw', 8-bit; formula from the script.
  it('When the Pillow LZW 8-bit fixture is decoded, then every pixel equals the writer formula', async () => {
    const { header, frames } = await decodeImage(fixture('pil-lzw-8bit.tif'), 'pil-lzw-8bit.tif')
    expect(header).toMatchObject({ width: 32, height: 24, frameCount: 1, bitDepth: 8, pixelSizeNm: null })
    const expected = Uint8Array.from({ length: 32 * 24 }, (_, i) => {
      const y = Math.floor(i / 32)
      return y < 8 ? 200 : ((i % 32) * 7 + y * 11) % 256
    })
    expect(frames[0].data).toEqual(expected)
  })
})

describe('decodeImage of hand-built TIFF layouts', () => {
  it('When the TIFF is big-endian 16-bit, then the values are read in big-endian order', async () => {
    const data = new Uint8Array([0x01, 0x02, 0xff, 0xfe, 0x00, 0x07, 0x80, 0x00])
    const bytes = handTiff([greyEntries(2, 2, 16)], data, { littleEndian: false })
    const { frames } = await decodeImage(bytes, 'mm.tif')
    expect(Array.from(frames[0].data)).toEqual([0x0102, 0xfffe, 0x0007, 0x8000])
  })

  it('When the strips of an uncompressed page are stored out of order, then each row comes from its own strip', async () => {
    // Two 16-bit rows of 2 px, one strip per row; strip 0 (row 0) is stored after strip 1 in the file.
    const data = new Uint8Array([0x10, 0x00, 0x20, 0x00, 0x01, 0x00, 0x02, 0x00])
    const entries = withEntry(withEntry(withEntry(greyEntries(2, 2, 16), [273, 4, [12, 8]]), [278, 4, [1]]), [279, 4, [4, 4]])
    const { frames } = await decodeImage(handTiff([entries], data), 'strips.tif')
    expect(Array.from(frames[0].data)).toEqual([1, 2, 0x10, 0x20])
  })

  it('When an uncompressed 16-bit page is WhiteIsZero, then values are inverted to the full 16-bit range', async () => {
    const data = new Uint8Array([0x00, 0x00, 0xff, 0xff, 0x34, 0x12, 0x00, 0x80])
    const { frames } = await decodeImage(handTiff([withEntry(greyEntries(2, 2, 16), [262, 3, [0]])], data), 'white.tif')
    expect(Array.from(frames[0].data)).toEqual([65535, 0, 65535 - 0x1234, 65535 - 0x8000])
  })

  it('When an uncompressed page holds 32-bit floats, then the floats are read in the file\'s byte order', async () => {
    const values = [1.5, -2.25, 1e-3, 65536.5]
    for (const littleEndian of [true, false]) {
      const data = new Uint8Array(16)
      values.forEach((v, i) => new DataView(data.buffer).setFloat32(4 * i, v, littleEndian))
      const bytes = handTiff([withEntry(greyEntries(2, 2, 32), [339, 3, [3]])], data, { littleEndian })
      const { frames } = await decodeImage(bytes, 'float.tif')
      expect(frames[0].data).toBeInstanceOf(Float32Array)
      expect(Array.from(frames[0].data)).toEqual(values.map(Math.fround))
    }
  })

  it('When the TIFF is 8-bit RGB, then each pixel is the BT.601 luminance, rounded', async () => {
    const rgb = [255, 0, 0, 0, 255, 0, 0, 0, 255, 90, 90, 90]
    const entries = greyEntries(4, 1, 8).map((e): Entry => (e[0] === 258 ? [258, 3, [8, 8, 8]] : e[0] === 279 ? [279, 4, [12]] : e))
    const bytes = handTiff([withEntry(withEntry(entries, [262, 3, [2]]), [277, 3, [3]])], new Uint8Array(rgb))
    const { header, frames } = await decodeImage(bytes, 'rgb.tif')
    // ITU-R BT.601 luma weights 0.299, 0.587, 0.114 [M]: 76.245 → 76, 149.685 → 150, 29.07 → 29; grey stays grey.
    expect(Array.from(frames[0].data)).toEqual([76, 150, 29, 90])
    expect(header.notes?.join(' ')).toContain('luminance')
  })

  it('When the TIFF is WhiteIsZero, then it is inverted to black-is-zero', async () => {
    const bytes = handTiff([withEntry(greyEntries(3, 1, 8), [262, 3, [0]])], new Uint8Array([0, 100, 255]))
    const { frames } = await decodeImage(bytes, 'wiz.tif')
    expect(Array.from(frames[0].data)).toEqual([255, 155, 0])
  })

  it('When a page is flagged as a reduced-resolution copy, then it is skipped and noted', async () => {
    const full = greyEntries(2, 2, 8)
    const thumbnail = withEntry(greyEntries(1, 1, 8), [254, 4, [1]])
    const { header, frames } = await decodeImage(handTiff([full, thumbnail], new Uint8Array([1, 2, 3, 4])), 'thumb.tif')
    expect(header.frameCount).toBe(1)
    expect(frames[0].data).toEqual(new Uint8Array([1, 2, 3, 4]))
    expect(header.notes?.join(' ')).toContain('skipped')
  })

  it('When the TIFF is 1 × 1, then it decodes to one pixel (analysis modules handle 1 × 1 as degenerate input)', async () => {
    const { header, frames } = await decodeImage(handTiff([greyEntries(1, 1, 8)], new Uint8Array([42])), 'one.tif')
    expect(header).toMatchObject({ width: 1, height: 1, frameCount: 1 })
    expect(Array.from(frames[0].data)).toEqual([42])
  })

  it('When a Deflate strip inflates far beyond its declared size, then decoding stops at the declared size', async () => {
    // 16 × 16 8-bit page whose one strip holds 50 MB of zeros, deflated to about 50 kB.
    const bomb = new Uint8Array(deflateSync(new Uint8Array(50_000_000)))
    const entries = withEntry(withEntry(greyEntries(16, 16, 8), [259, 3, [8]]), [279, 4, [bomb.length]])
    const started = performance.now()
    const { frames } = await decodeImage(handTiff([entries], bomb), 'deflate-bomb.tif')
    expect(frames[0].data).toEqual(new Uint8Array(256))
    expect(performance.now() - started).toBeLessThan(2000)
  })
})

describe('pixel size from TIFF tags and ImageDescription', () => {
  // METHODS.md check #56 [D]: XResolution 10000/1, ResolutionUnit 3 → 1.000 µm/px.
  it('When XResolution is 10000/1 per centimetre, then the pixel size is 1000 nm', async () => {
    const bytes = encodeTiff([{ width: 2, height: 2, data: new Uint8Array(4) }], { resolution: { x: [10000, 1], unit: 3 } })
    const header = await probeImage(bytes, 'cal.tif')
    expect(header.pixelSizeNm).toBeCloseTo(1000, 9)
    expect(header.pixelSizeSource).toBe('tiff-resolution')
  })

  // METHODS.md check #57 [D]: 72/1 per inch → 25.4 mm / 72 = 352.78 µm/px, flagged as not physical: reported as
  // unknown (null), with the computed value and the reason in the note.
  it('When XResolution is the 72 dpi placeholder, then the pixel size is null and the note gives 352.8 µm', async () => {
    const bytes = encodeTiff([{ width: 2, height: 2, data: new Uint8Array(4) }], { resolution: { x: [72, 1], unit: 2 } })
    const header = await probeImage(bytes, 'placeholder.tif')
    expect(header.pixelSizeNm).toBeNull()
    expect(header.pixelSizeSource).toBeNull()
    expect(header.pixelSizeNote).toContain('352.8 µm')
    expect(header.pixelSizeNote).toContain('72 dpi')
  })

  it('When ResolutionUnit is 1 and ImageDescription says unit=um, then XResolution is read as pixels per µm', async () => {
    const bytes = encodeTiff([{ width: 2, height: 2, data: new Uint8Array(4) }], {
      resolution: { x: [25, 2], unit: 1 },
      description: 'images=1\nunit=um\nmin=0.0\n',
    })
    const header = await probeImage(bytes, 'unit-in-description.tif')
    // 12.5 px per µm → 80 nm per px [D].
    expect(header.pixelSizeNm).toBeCloseTo(80, 9)
    expect(header.pixelSizeSource).toBe('tiff-description')
    expect(header.pixelSizeNote).toContain('unit=um')
  })

  it('When ResolutionUnit is 1 and the description has no unit, then the pixel size is null', async () => {
    const bytes = encodeTiff([{ width: 2, height: 2, data: new Uint8Array(4) }], { resolution: { x: [25, 2], unit: 1 } })
    const header = await probeImage(bytes, 'no-unit.tif')
    expect(header.pixelSizeNm).toBeNull()
    expect(header.pixelSizeNote).toContain('ResolutionUnit is 1')
  })

  it.each([
    ['pixel_size=0.08 um', 80],
    ['Pixel size: 80 nm', 80],
    ['pixel_size_nm=12.5', 12.5],
    ['{"pixelsize_um": 0.25}', 250],
  ])('When the description says "%s" and no resolution tags exist, then the pixel size is %s nm', (description, nm) => {
    const result = tiffPixelSize({ xResolution: null, yResolution: null, unit: null, description })
    expect(result.pixelSizeNm).toBeCloseTo(nm, 9)
    expect(result.pixelSizeSource).toBe('tiff-description')
  })

  it.each([
    ['spacing=0.5\nunit=um', 'spacing is a slice distance, and unit= needs ResolutionUnit 1'],
    ['pixel_size=80', 'a pixel size without a unit'],
    ['pixel_size=0.001 nm', 'below 0.1 nm per pixel'],
  ])('When the description is "%s" (%s), then no pixel size is taken from it', (description) => {
    expect(tiffPixelSize({ xResolution: null, yResolution: null, unit: null, description }).pixelSizeNm).toBeNull()
  })
})

describe('decodeImage of PNG and JPEG (jimp)', () => {
  it('When a greyscale PNG is decoded, then the values come back exactly', async () => {
    const data = Uint8Array.from({ length: 40 * 30 }, (_, i) => (i * 13) % 256)
    const { header, frames } = await decodeImage(await encodeGrayPng({ width: 40, height: 30, data }), 'grey.png')
    expect(header).toMatchObject({ format: 'png', mediaType: 'image/png', width: 40, height: 30, frameCount: 1 })
    expect(header).toMatchObject({ bitDepth: 8, pixelSizeNm: null })
    expect(frames[0].data).toEqual(data)
  })

  it('When a colour PNG written by jimp is decoded, then each pixel is the BT.601 luminance', async () => {
    const rgba = new Uint8Array([255, 0, 0, 255, 0, 255, 0, 255, 0, 0, 255, 255, 10, 200, 30, 255])
    const png = new Uint8Array(await Jimp.fromBitmap({ width: 4, height: 1, data: rgba }).getBuffer('image/png'))
    const { header, frames } = await decodeImage(png, 'colour.png')
    // 0.299·10 + 0.587·200 + 0.114·30 = 123.81 → 124 [D from the BT.601 weights].
    expect(Array.from(frames[0].data)).toEqual([76, 150, 29, 124])
    expect(header.notes?.join(' ')).toContain('luminance')
  })

  it('When a 1 × 1 PNG is decoded, then it gives one pixel', async () => {
    const { frames } = await decodeImage(await encodeGrayPng({ width: 1, height: 1, data: new Uint8Array([7]) }), 'dot.png')
    expect(Array.from(frames[0].data)).toEqual([7])
  })

  it('When a JPEG written by jimp at quality 100 is decoded, then its size comes from SOF0 and values stay within 2 levels', async () => {
    const grey = Uint8Array.from({ length: 64 * 48 }, (_, i) => 40 + Math.floor((i % 64) * 2.5))
    const rgba = new Uint8Array(grey.length * 4)
    grey.forEach((v, i) => rgba.set([v, v, v, 255], 4 * i))
    const jpeg = new Uint8Array(await Jimp.fromBitmap({ width: 64, height: 48, data: rgba }).getBuffer('image/jpeg', { quality: 100 }))
    const header = await probeImage(jpeg, 'ramp.jpg')
    expect(header).toMatchObject({ format: 'jpeg', mediaType: 'image/jpeg', width: 64, height: 48, bitDepth: 8 })
    const { frames } = await decodeImage(jpeg, 'ramp.jpg')
    let worst = 0
    for (let i = 0; i < grey.length; i++) worst = Math.max(worst, Math.abs(frames[0].data[i] - grey[i]))
    expect(worst).toBeLessThanOrEqual(2)
  })

  it('When a JPEG carries EXIF orientation 6 (quarter turn), then the header and the frame both have swapped sizes', async () => {
    const rgba = new Uint8Array(40 * 20 * 4).fill(200)
    const plain = new Uint8Array(await Jimp.fromBitmap({ width: 40, height: 20, data: rgba }).getBuffer('image/jpeg'))
    // APP1 "Exif\0\0" + little-endian TIFF with IFD0 = { Orientation (274), SHORT, 1, value 6 }, inserted after SOI.
    const tiff = [0x49, 0x49, 42, 0, 8, 0, 0, 0, 1, 0, 0x12, 0x01, 3, 0, 1, 0, 0, 0, 6, 0, 0, 0, 0, 0, 0, 0]
    const payload = [0x45, 0x78, 0x69, 0x66, 0, 0, ...tiff]
    const app1 = [0xff, 0xe1, 0, payload.length + 2, ...payload]
    const jpeg = new Uint8Array([...plain.subarray(0, 2), ...app1, ...plain.subarray(2)])
    const { header, frames } = await decodeImage(jpeg, 'turned.jpg')
    expect([header.width, header.height]).toEqual([20, 40])
    expect([frames[0].width, frames[0].height]).toEqual([20, 40])
    expect(header.notes?.join(' ')).toContain('EXIF orientation 6')
  })

  it('When a JPEG is cut before its end-of-image marker, then it is corrupt-image', async () => {
    const rgba = new Uint8Array(32 * 32 * 4).fill(128)
    const jpeg = new Uint8Array(await Jimp.fromBitmap({ width: 32, height: 32, data: rgba }).getBuffer('image/jpeg'))
    const e = await expectDecodeError(probeImage(jpeg.subarray(0, jpeg.length - 40), 'cut.jpg'), 'corrupt-image', 400, 'cut.jpg')
    expect(e.message).toContain('truncated')
  })
})

describe('decodeImage with bad input', () => {
  it('When the file has zero bytes, then empty-file 400', async () => {
    await expectDecodeError(probeImage(new Uint8Array(0), 'empty.tif'), 'empty-file', 400, 'empty.tif')
  })

  it('When a text file is renamed .tif, then unsupported-type 415 saying it contains text', async () => {
    const e = await expectDecodeError(
      probeImage(new TextEncoder().encode('frame,field_mT\n0,1\n'), 'notes.tif'),
      'unsupported-type',
      415,
      'notes.tif',
    )
    expect(e.message).toContain('text')
  })

  it('When the file is a BigTIFF, then unsupported-type 415 naming BigTIFF', async () => {
    const bytes = new Uint8Array([0x49, 0x49, 0x2b, 0x00, 8, 0, 0, 0, 16, 0, 0, 0, 0, 0, 0, 0])
    const e = await expectDecodeError(probeImage(bytes, 'big.tif'), 'unsupported-type', 415, 'big.tif')
    expect(e.message).toContain('BigTIFF')
  })

  it('When a PNG is cut in half, then corrupt-image 400 saying it is truncated', async () => {
    const png = await encodeGrayPng({ width: 64, height: 64, data: Uint8Array.from({ length: 4096 }, (_, i) => i % 251) })
    const e = await expectDecodeError(probeImage(png.subarray(0, png.length >> 1), 'half.png'), 'corrupt-image', 400, 'half.png')
    expect(e.message).toContain('truncated')
  })

  it('When a tiny PNG declares 50,000 × 50,000 pixels, then image-too-large 413 before any decoding', async () => {
    // A decompression bomb in miniature: the IHDR asks for 2.5e9 pixels (10 GB as RGBA), the file is ~70 bytes.
    const bomb = handPng(50_000, 50_000, new Uint8Array(deflateSync(new Uint8Array(100))))
    expect(bomb.length).toBeLessThan(100)
    const started = performance.now()
    await expectDecodeError(decodeImage(bomb, 'bomb.png'), 'image-too-large', 413, 'bomb.png')
    expect(performance.now() - started).toBeLessThan(200)
  })

  it('When the PNG IHDR checksum is wrong, then corrupt-image 400', async () => {
    const png = handPng(4, 4, new Uint8Array(deflateSync(new Uint8Array(20))))
    png[16] ^= 0x01
    await expectDecodeError(probeImage(png, 'crc.png'), 'corrupt-image', 400, 'crc.png')
  })

  it('When a TIFF is cut short, then corrupt-image 400 saying it is truncated', async () => {
    const tiff = fixture('tifffile-3page-16bit.tif')
    const e = await expectDecodeError(probeImage(tiff.subarray(0, 3000), 'cut.tif'), 'corrupt-image', 400, 'cut.tif')
    expect(e.message).toContain('truncated')
  })

  it('When the compressed data of a TIFF page is overwritten, then decodeFrame gives corrupt-image 400', async () => {
    const tiff = fixture('tifffile-3page-16bit.tif').slice()
    // The first page's zlib stream starts at byte 208 (tifffile's layout); break its header and body.
    tiff.fill(0xff, 208, 260)
    await expectDecodeError(decodeFrame(tiff, 'damaged.tif', 0), 'corrupt-image', 400, 'damaged.tif')
  })

  it('When the IFD chain loops back on itself, then corrupt-image 400, promptly', async () => {
    const single = handTiff([greyEntries(1, 1, 8)], new Uint8Array([1]))
    const firstIfd = new DataView(single.buffer).getUint32(4, true)
    const looped = handTiff([greyEntries(1, 1, 8), greyEntries(1, 1, 8)], new Uint8Array([1]), { nextOverride: firstIfd })
    const e = await expectDecodeError(probeImage(looped, 'loop.tif'), 'corrupt-image', 400, 'loop.tif')
    expect(e.message).toContain('loops')
  })

  it('When the first IFD offset points past the end, then corrupt-image 400', async () => {
    const bytes = handTiff([greyEntries(1, 1, 8)], new Uint8Array([1]))
    new DataView(bytes.buffer).setUint32(4, 1_000_000, true)
    await expectDecodeError(probeImage(bytes, 'offset.tif'), 'corrupt-image', 400, 'offset.tif')
  })

  it('When a TIFF declares 5000 pages, then too-many-frames 413 after reading at most the limit', async () => {
    const pages = Array.from({ length: 5000 }, () => greyEntries(1, 1, 8))
    const bytes = handTiff(pages, new Uint8Array([9]))
    const started = performance.now()
    const e = await expectDecodeError(probeImage(bytes, 'pages.tif'), 'too-many-frames', 413, 'pages.tif')
    expect(e.message).toContain(String(DEFAULT_DECODE_LIMITS.maxFrames))
    expect(performance.now() - started).toBeLessThan(500)
  })

  it('When a stack has more pages than a custom limit, then too-many-frames 413', async () => {
    const frames = Array.from({ length: 11 }, () => ({ width: 2, height: 2, data: new Uint8Array(4) }))
    await expectDecodeError(probeImage(encodeTiff(frames), 'eleven.tif', { maxFrames: 10 }), 'too-many-frames', 413, 'eleven.tif')
  })

  it('When a TIFF page declares 100,000 × 100,000 pixels, then image-too-large 413 before allocation', async () => {
    const entries = withEntry(withEntry(greyEntries(1, 1, 8), [256, 4, [100_000]]), [257, 4, [100_000]])
    const started = performance.now()
    await expectDecodeError(decodeImage(handTiff([entries], new Uint8Array([1])), 'huge.tif'), 'image-too-large', 413, 'huge.tif')
    expect(performance.now() - started).toBeLessThan(200)
  })

  it('When frames × pixels exceed maxTotalPixels, then image-too-large 413', async () => {
    const frames = Array.from({ length: 3 }, () => ({ width: 10, height: 10, data: new Uint8Array(100) }))
    await expectDecodeError(probeImage(encodeTiff(frames), 'total.tif', { maxTotalPixels: 250 }), 'image-too-large', 413, 'total.tif')
  })

  it.each([
    ['JPEG compression (7)', [259, 3, [7]] as Entry],
    ['palette colour', [262, 3, [3]] as Entry],
    ['signed 16-bit samples', [339, 3, [2]] as Entry],
  ])('When a TIFF uses %s, then unsupported-type 415', async (_, entry) => {
    const bytes = handTiff([withEntry(greyEntries(2, 1, 8), entry)], new Uint8Array([1, 2]))
    await expectDecodeError(probeImage(bytes, 'odd.tif'), 'unsupported-type', 415, 'odd.tif')
  })

  it('When the pages of a stack differ in size, then unsupported-type 415', async () => {
    const bytes = encodeTiff([
      { width: 2, height: 2, data: new Uint8Array(4) },
      { width: 3, height: 2, data: new Uint8Array(6) },
    ])
    const e = await expectDecodeError(probeImage(bytes, 'mixed.tif'), 'unsupported-type', 415, 'mixed.tif')
    expect(e.message).toContain('page 2')
  })

  it('When a frame index is outside the stack, then decodeFrame throws RangeError', async () => {
    const bytes = encodeTiff([{ width: 2, height: 2, data: new Uint8Array(4) }])
    await expect(decodeFrame(bytes, 'one.tif', 1)).rejects.toThrow(RangeError)
  })
})

describe('bounded TIFF block decoders', () => {
  it('When the CRC-32 of IHDR bytes is computed, then it equals node:zlib crc32', () => {
    const bytes = new TextEncoder().encode('IHDR\0\0\0\x20\0\0\0\x18\x08\x00\x00\x00\x00')
    expect(crc32(bytes)).toBe(zlibCrc32(bytes))
  })

  // The PackBits example of TIFF 6.0 section 9 (also Apple TN1023) [M]: 15 packed bytes → 24 bytes.
  it('When the TIFF 6.0 PackBits example is unpacked, then it gives the 24 documented bytes', () => {
    const packed = new Uint8Array([0xfe, 0xaa, 0x02, 0x80, 0x00, 0x2a, 0xfd, 0xaa, 0x03, 0x80, 0x00, 0x2a, 0x22, 0xf7, 0xaa])
    const expected = [0xaa, 0xaa, 0xaa, 0x80, 0x00, 0x2a, 0xaa, 0xaa, 0xaa, 0xaa, 0x80, 0x00, 0x2a, 0x22, ...new Array(10).fill(0xaa)]
    expect(Array.from(packBitsDecodeBounded(packed, 1000))).toEqual(expected)
    expect(Array.from(packBitsDecodeBounded(packed, 5))).toEqual(expected.slice(0, 5))
  })

  it('When an LZW strip is decoded with a smaller limit, then the output is the prefix of the full strip', () => {
    // Pillow 9.4.0 fixture: one LZW strip of 485 bytes at offset 8 (read from its tags by tifffile 2023.2.3).
    const strip = fixture('pil-lzw-8bit.tif').subarray(8, 8 + 485)
    const full = lzwDecodeBounded(strip, 32 * 24)
    expect(full.length).toBe(32 * 24)
    expect(lzwDecodeBounded(strip, 100)).toEqual(full.subarray(0, 100))
  })

  it('When a zlib stream expands past the limit, then inflateBounded stops at the limit', async () => {
    const packed = new Uint8Array(deflateSync(new Uint8Array(10_000_000).fill(3)))
    const out = await inflateBounded(packed, 1000)
    expect(out).toEqual(new Uint8Array(1000).fill(3))
  })

  it('When a zlib stream is damaged before the limit, then inflateBounded throws', async () => {
    const packed = new Uint8Array(deflateSync(Uint8Array.from({ length: 5000 }, (_, i) => (i * 7) % 256)))
    await expect(inflateBounded(packed.subarray(0, packed.length >> 1), 5000)).rejects.toThrow(/damaged/)
  })
})
