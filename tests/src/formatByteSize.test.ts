import { describe, expect, it } from 'vitest'
import { formatByteSize } from '@/formatByteSize'

describe('formatByteSize', () => {
  it.each([
    [512, '512 bytes'],
    // Decimal units (1 MB = 10⁶ bytes), as file managers and the upload limit count: common practice, no source.
    [5_400_000, '5.4 MB'],
    [21_500_000, '21.5 MB'],
    [250_000_000, '250 MB'],
    [1_200_000_000, '1.2 GB'],
  ])('When a file has %s bytes, then its size reads "%s"', (bytes, text) => {
    expect(formatByteSize(bytes)).toBe(text)
  })
})
