/**
 * Display derivatives of a frame, made once at ingest with jimp: an 8-bit rendering contrast-stretched between the
 * 0.5th and 99.5th intensity percentiles (so a few hot pixels do not flatten the contrast), and a thumbnail.
 */
import { Jimp } from 'jimp'
import type { GrayImage } from '../../shared/analysis/types'

export const THUMBNAIL_SIZE = 160

/** Intensity percentiles from a 4096-bin histogram (exact enough for display; keeps memory flat). */
export function displayRange(frame: GrayImage, lowPercent = 0.5, highPercent = 99.5): { low: number; high: number } {
  const { data } = frame
  let min = Infinity
  let max = -Infinity
  for (let i = 0; i < data.length; i++) {
    const v = data[i]
    if (v < min) min = v
    if (v > max) max = v
  }
  if (!(max > min)) return { low: min, high: min }
  const bins = 4096
  const counts = new Uint32Array(bins)
  const scale = (bins - 1) / (max - min)
  for (let i = 0; i < data.length; i++) counts[Math.round((data[i] - min) * scale)]++
  const pick = (fraction: number) => {
    const target = fraction * data.length
    let acc = 0
    for (let b = 0; b < bins; b++) {
      acc += counts[b]
      if (acc >= target) return min + b / scale
    }
    return max
  }
  return { low: pick(lowPercent / 100), high: pick(highPercent / 100) }
}

function toRgba(frame: GrayImage, low: number, high: number): Buffer {
  const { data } = frame
  const out = Buffer.alloc(data.length * 4)
  const span = high > low ? 255 / (high - low) : 0
  for (let i = 0, j = 0; i < data.length; i++, j += 4) {
    const v = span ? Math.min(255, Math.max(0, Math.round((data[i] - low) * span))) : 128
    out[j] = v
    out[j + 1] = v
    out[j + 2] = v
    out[j + 3] = 255
  }
  return out
}

export async function renderFrame(frame: GrayImage): Promise<{ preview: Buffer; thumbnail: Buffer; low: number; high: number }> {
  const { low, high } = displayRange(frame)
  const image = new Jimp({ width: frame.width, height: frame.height, data: toRgba(frame, low, high) })
  const preview = await image.getBuffer('image/png')
  const longest = Math.max(frame.width, frame.height)
  const scale = Math.min(1, THUMBNAIL_SIZE / longest)
  const thumb = image.clone().resize({ w: Math.max(1, Math.round(frame.width * scale)), h: Math.max(1, Math.round(frame.height * scale)) })
  const thumbnail = await thumb.getBuffer('image/png')
  return { preview, thumbnail, low, high }
}
