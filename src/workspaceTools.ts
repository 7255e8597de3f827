/**
 * The annotation workspace's tools: id, plain name, keyboard key, how to use it, whether it edits the mask, and its
 * icon (our own line drawings on a 24 × 24 grid, drawn with `currentColor`). The toolbar, the help popover and the
 * keyboard handler all read this one list.
 */

export const WORKSPACE_TOOL_IDS = ['move', 'paint', 'fill', 'outline', 'trace', 'scale', 'gauge'] as const
export type WorkspaceToolId = (typeof WORKSPACE_TOOL_IDS)[number]

/** One stroke or filled shape of an icon. */
export interface IconPart {
  d: string
  filled?: boolean
}

export interface WorkspaceTool {
  id: WorkspaceToolId
  name: string
  /** The key that picks the tool (lower case; shown upper case). */
  key: string
  /** One or two sentences: how the tool is used with the mouse. */
  how: string
  /** Changes the mask (hidden from people who may only look). */
  edits: boolean
  icon: IconPart[]
}

export const WORKSPACE_TOOLS: readonly WorkspaceTool[] = [
  {
    id: 'move',
    name: 'Move view',
    key: 'v',
    how: 'Drag to move the image; the wheel zooms. With any tool: hold Space and drag, or drag with the middle button.',
    edits: false,
    icon: [{ d: 'M12 3v18M3 12h18M12 3 9.5 5.5M12 3l2.5 2.5M12 21l-2.5-2.5M12 21l2.5-2.5M3 12l2.5-2.5M3 12l2.5 2.5M21 12l-2.5-2.5M21 12l-2.5 2.5' }],
  },
  {
    id: 'paint',
    name: 'Paint phase',
    key: 'p',
    how: 'Drag to paint the chosen phase (up or down). [ and ] make the round tip smaller or larger.',
    edits: true,
    icon: [{ d: 'M4 19c2.5-5 5.5 1 8.5-4' }, { d: 'M13.5 9.5a3.5 3.5 0 1 0 7 0a3.5 3.5 0 1 0-7 0z', filled: true }],
  },
  {
    id: 'fill',
    name: 'Fill domain',
    key: 'f',
    how: 'Click a domain: its whole edge-connected area takes the chosen phase.',
    edits: true,
    icon: [{ d: 'M3.5 13c0-4.5 3.5-8.5 8-8.5s6.5 2.5 6.5 5.5-3 8-8 8-6.5-2-6.5-5z' }, { d: 'M19.5 14.5s-2.2 2.6-2.2 3.8a2.2 2.2 0 0 0 4.4 0c0-1.2-2.2-3.8-2.2-3.8z', filled: true }],
  },
  {
    id: 'outline',
    name: 'Outline area',
    key: 'o',
    how: 'Click the corners of an area, then Enter (or double-click, or click the first corner): the inside takes the chosen phase. Backspace removes the last corner.',
    edits: true,
    icon: [{ d: 'M5 7l9-3.5 6 8.5-7 8L4 16z' }, { d: 'M3.5 5.5h3v3h-3zM12.5 2h3v3h-3zM18.5 10.5h3v3h-3zM11.5 18.5h3v3h-3zM2.5 14.5h3v3h-3z', filled: true }],
  },
  {
    id: 'trace',
    name: 'Trace wall',
    key: 'w',
    how: 'Click along a wall between domains, then Enter: a 1 px line of the down phase splits the domains it crosses.',
    edits: true,
    icon: [{ d: 'M3 18l5-7 4 4 4-7 5 5' }, { d: 'M7 11a1 1 0 1 0 2 0a1 1 0 1 0-2 0zM11 15a1 1 0 1 0 2 0a1 1 0 1 0-2 0zM15 8a1 1 0 1 0 2 0a1 1 0 1 0-2 0z', filled: true }],
  },
  {
    id: 'scale',
    name: 'Measure scale bar',
    key: 'c',
    how: 'Drag along the scale bar printed on the image, then type its real length: this sets the image’s pixel size.',
    edits: false,
    icon: [{ d: 'M3 16 16 3l5 5L8 21z' }, { d: 'M7 12l2 2M10 9l2 2M13 6l2 2' }],
  },
  {
    id: 'gauge',
    name: 'Gauge wall width',
    key: 'g',
    how: 'Drag across a wall: the raw intensity along the line is fitted with a tanh step, giving the wall width in px (and nm once calibrated).',
    edits: false,
    icon: [{ d: 'M3 17.5c5 0 5.5-.5 9-5.5s4-5 9-5' }, { d: 'M3 21h18M12 19v4' }],
  },
]

export function workspaceTool(id: WorkspaceToolId): WorkspaceTool {
  return WORKSPACE_TOOLS.find((tool) => tool.id === id)!
}

/** Brush diameters offered by [ and ], px. */
export const BRUSH_SIZES = [1, 2, 3, 4, 6, 8, 12, 16, 24, 32, 48, 64, 96, 128] as const

/** The next brush size up (+1) or down (−1) from `size`. */
export function stepBrushSize(size: number, direction: 1 | -1): number {
  if (direction > 0) return BRUSH_SIZES.find((s) => s > size) ?? BRUSH_SIZES[BRUSH_SIZES.length - 1]
  return [...BRUSH_SIZES].reverse().find((s) => s < size) ?? BRUSH_SIZES[0]
}

/** The other keys, for the help popover (the tool keys come from the list above). */
export const WORKSPACE_KEYS: readonly { keys: string; what: string }[] = [
  { keys: 'U / D / X', what: 'Choose the up phase, the down phase, or swap them' },
  { keys: '[ / ]', what: 'Smaller / larger paint tip' },
  { keys: 'M', what: 'Show or hide the mask overlay' },
  { keys: 'Ctrl+Z', what: 'Undo' },
  { keys: 'Ctrl+Shift+Z / Ctrl+Y', what: 'Redo' },
  { keys: 'Ctrl+S', what: 'Save now (it also saves 20 s after your last edit)' },
  { keys: 'Enter / Esc', what: 'Finish / cancel an outline or a wall trace' },
  { keys: 'Arrows, then A', what: 'With the image focused: move the keyboard cursor (Shift: 10 px), A applies the tool there' },
  { keys: 'Space + drag, middle drag', what: 'Move the view with any tool' },
  { keys: '+ / − / 0 / 1', what: 'Zoom in / out / fit / one image pixel per screen pixel' },
  { keys: '?', what: 'Open this help' },
]
