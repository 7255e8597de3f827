import type { FrameDto } from '@shared/types/image'
import { formatNumber } from '@/formatQuantity'

/** Digits kept of a recorded field or temperature: as many as a lab notebook carries. */
const DIGITS = 6

/**
 * A frame's experimental condition for people: "12.5 mT", "300 K" or "−20 Oe · 300 K"; null when neither is known.
 * The field keeps the unit it was recorded in (no conversion, so the number matches the lab notebook); numbers read
 * as everywhere else in the app (formatNumber: true minus, a decimal point whatever the browser's language).
 */
export function frameConditionLabel(frame: Pick<FrameDto, 'field' | 'fieldUnit' | 'temperatureK'>): string | null {
  const parts: string[] = []
  if (frame.field !== null) parts.push(`${formatNumber(frame.field, DIGITS)} ${frame.fieldUnit ?? ''}`.trim())
  if (frame.temperatureK !== null) parts.push(`${formatNumber(frame.temperatureK, DIGITS)} K`)
  return parts.length ? parts.join(' · ') : null
}
