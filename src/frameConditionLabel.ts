import type { FrameDto } from '@shared/types/image'

const number = new Intl.NumberFormat(undefined, { maximumSignificantDigits: 6 })

/**
 * A frame's experimental condition for people: "12.5 mT", "300 K" or "−20 Oe · 300 K"; null when neither is known.
 * The field keeps the unit it was recorded in (no conversion, so the number matches the lab notebook).
 */
export function frameConditionLabel(frame: Pick<FrameDto, 'field' | 'fieldUnit' | 'temperatureK'>): string | null {
  const parts: string[] = []
  if (frame.field !== null) parts.push(`${number.format(frame.field)} ${frame.fieldUnit ?? ''}`.trim())
  if (frame.temperatureK !== null) parts.push(`${number.format(frame.temperatureK)} K`)
  return parts.length ? parts.join(' · ') : null
}
