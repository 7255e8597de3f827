import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { LabRole } from '@shared/auth/permissions'
import type { SampleDto } from '@shared/types/lab'
import type { LabMaterialDto } from '@shared/types/labMaterial'
import type { SampleMeasurementsDto } from '@shared/types/sampleMeasurements'
import { createAppRouter } from '@/router'
import SampleTheoryMaterialDialog from '@/components/SampleTheoryMaterialDialog.vue'
import SampleTheoryPanel from '@/components/SampleTheoryPanel.vue'
import { useSessionStore } from '@/stores/session'
import { errorResponse, jsonResponse, stubFetch, type RecordedRequest } from '../fakeApi'
import { alertTexts, chooseOption, chosenTexts, getButton, getByLabel, messageBox, openSelectOptions, pressInMessageBox, selectNamed } from '../domQueries'
import { sampleDto, sampleFrameMeasurementDto, sampleStackRunDto } from '../labDtos'

let pinia: Pinia

/*
 * Independent reference numbers. The formulas are the textbook ones, evaluated here from the constants given:
 * - Bloch parameter Δ = √(A/K), wall width δ_B = π√(A/K), 180° wall energy σ_w = 4√(AK) — Hubert & Schäfer, Magnetic
 *   Domains (1998), §3.6 — from memory; METHODS §7.2.
 * - Exchange length l_ex = √(2A/(μ0Ms²)) (and the √(A/(μ0Ms²)) form) — Abo et al. 2013, IEEE Trans. Magn. 49:4937
 *   (from memory, METHODS §7.2); quality factor Q = 2K/(μ0Ms²).
 * - Kittel stripe width D = √(σ_w·t/(c·μ0Ms²)), c = (4/π³)(7ζ(3)/8) — C. Kittel, Rev. Mod. Phys. 21:541 (1949), CGS
 *   D = √(σ_w t/(1.7 Ms²)); METHODS §7.2 [D].
 * μ0 = 4π×10⁻⁷ H/m (exact before 2019); ζ(3) = 1.2020569031595942 (Apéry's constant).
 */
const MU0 = 4e-7 * Math.PI
const ZETA3 = 1.2020569031595942
const KITTEL_C = (4 / Math.PI ** 3) * ((7 * ZETA3) / 8)
const NM = 1e9

const blochParameterNm = (a: number, k: number) => Math.sqrt(a / Math.abs(k)) * NM
const blochWidthNm = (a: number, k: number) => Math.PI * Math.sqrt(a / Math.abs(k)) * NM
const wallEnergyMJ = (a: number, k: number) => 4 * Math.sqrt(a * Math.abs(k)) * 1e3
const exchangeLengthNm = (a: number, ms: number) => Math.sqrt((2 * a) / (MU0 * ms * ms)) * NM
const exchangeLengthSqrtANm = (a: number, ms: number) => Math.sqrt(a / (MU0 * ms * ms)) * NM
const qualityFactor = (k: number, ms: number) => (2 * Math.abs(k)) / (MU0 * ms * ms)
const kittelWidthNm = (sigmaJPerM2: number, tNm: number, ms: number) => Math.sqrt((sigmaJPerM2 * (tNm / NM)) / (KITTEL_C * MU0 * ms * ms)) * NM

/** A number as the page shows it in fixed-point form: `digits` significant digits, trailing zeros dropped, true minus (U+2212). */
const shown = (value: number, digits = 4) => String(Number(value.toPrecision(digits))).replace(/^-/, '−')

/** A lab material as GET /api/labs/1/materials lists it (constants invented for the demo scenario). */
function labMaterial(overrides: Partial<LabMaterialDto> = {}): LabMaterialDto {
  return {
    id: 12,
    labId: 1,
    name: 'Ta/CoFeB/MgO',
    msAPerM: 1.1e6,
    aJPerM: 15e-12,
    kJPerM3: 800e3,
    tcK: null,
    source: 'Own VSM and BLS measurements on KB24-A300, Elena Varga, 2026',
    createdAt: '2026-11-20T10:00:00.000Z',
    updatedAt: '2026-11-20T10:00:00.000Z',
    ...overrides,
  }
}



function measurementsOf(sample: SampleDto, parts: Partial<Pick<SampleMeasurementsDto, 'frames' | 'stackRuns'>> = {}): SampleMeasurementsDto {
  return { sample, labId: 1, projectName: 'KB-24 anneal series', frames: [], stackRuns: [], ...parts }
}

interface MountOptions {
  sample?: SampleDto
  measurements?: SampleMeasurementsDto | null
  role?: LabRole
  materials?: () => Response
  extra?: Record<string, (request: RecordedRequest) => Response>
}

/** The panel as the sample page holds it, for a signed-in member of the Thin-Film Magnetism Group (lab 1). */
async function mountPanel({ sample = sampleDto(), measurements = null, role = 'microscopist', materials = () => jsonResponse(200, []), extra = {} }: MountOptions = {}) {
  const requests = stubFetch({
    'GET /api/auth/me': () => jsonResponse(200, { id: 3, email: 'elena.varga@thin-film.example', name: 'Elena Varga', memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role }], csrfToken: 't' }),
    'GET /api/labs/1/materials': materials,
    ...extra,
  })
  await useSessionStore().restore()
  const router = createAppRouter(createMemoryHistory())
  await router.push('/samples/3')
  const wrapper = mount(SampleTheoryPanel, {
    props: { sample, labId: 1, measurements },
    global: { plugins: [pinia, router, ElementPlus] },
    attachTo: document.body,
  })
  await flushPromises()
  return { wrapper, requests }
}

type Wrapper = Awaited<ReturnType<typeof mountPanel>>['wrapper']

/** What a select shows as chosen. */
const chosen = (wrapper: Wrapper, name: string) => chosenTexts(wrapper, name)
const choose = chooseOption

/** The rows of a table named `label`, each as its cells' texts, keyed by the first cell. */
function tableRows(wrapper: Wrapper, label: string): Map<string, string[]> {
  const table = wrapper.find(`[aria-label="${label}"]:not(input)`)
  if (!table.exists()) throw new Error(`No table "${label}"`)
  const rows = table.findAll('.el-table__body-wrapper tbody tr').map((row) => row.findAll('td').map((cell) => cell.text().trim()))
  return new Map(rows.map((cells) => [cells[0], cells]))
}

/** The cells of the row whose first cell starts with `quantity`. */
function row(rows: Map<string, string[]>, quantity: string): string[] {
  const found = [...rows.entries()].find(([first]) => first.startsWith(quantity))
  if (!found) throw new Error(`No row "${quantity}" (rows: ${[...rows.keys()].join(' | ')})`)
  return found[1]
}

/** Predicted, CGS/other, measured and ratio cells of a theory row (Quantity and Formula come first). */
const theory = (wrapper: Wrapper, quantity: string) => {
  const [, formula, predicted, other, measured, ratio] = row(tableRows(wrapper, 'Theory against measurement'), quantity)
  return { formula, predicted, other, measured, ratio }
}

/** SI, CGS and source cells of a constants row. */
const constant = (wrapper: Wrapper, name: string) => {
  const [, si, cgs, source] = row(tableRows(wrapper, 'Material constants'), name)
  return { si, cgs, source }
}

/** The material dialog (teleported to the body); its labels name its fields. */
const dialog = (wrapper: Wrapper) => wrapper.findComponent(SampleTheoryMaterialDialog)

/** The newest confirm box: Element Plus puts it at the end of the body, outside the mounted component (a closed one may linger). */


beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('SampleTheoryPanel, choosing constants', () => {
  it('When the sample’s material matches no known entry, then the panel asks for a material and offers the built-in table', async () => {
    // KB24-A300 is "Ta/CoFeB/MgO"; the lab has no materials yet.
    const { wrapper, requests } = await mountPanel()
    expect(requests.filter((r) => r.url === '/api/labs/1/materials')).toHaveLength(1)
    expect(chosen(wrapper, 'Material constants')).toEqual([])
    expect(wrapper.text()).toContain('Choose a material to see the predictions.')
    expect(wrapper.find('[aria-label="Theory against measurement"]').exists()).toBe(false)
    expect((await openSelectOptions(wrapper, 'Material constants')).map((o) => o.textContent?.trim())).toEqual(['Fe', 'Co', 'Ni', 'Nd2Fe14B', 'Permalloy Ni80Fe20'])
  })

  it('When Fe is chosen, then its constants show in SI and CGS with their sources, matching the METHODS §9.3 conversions', async () => {
    const { wrapper } = await mountPanel()
    await choose(wrapper, 'Material constants', 'Fe')
    expect(chosen(wrapper, 'Material constants')).toEqual(['Fe'])

    // METHODS §9.3 check [D]: Fe Ms 1.71 MA/m = 1710 emu/cm³; check #60: μ0Ms = 2.149 T.
    const ms = constant(wrapper, 'Saturation magnetization Ms')
    expect(ms.si).toBe('1.71 MA/m')
    expect(ms.cgs).toBe(`1710 emu/cm³ · μ0Ms = ${shown(MU0 * 1.71e6)} T`)
    expect(ms.cgs).toContain('2.149 T')
    expect(ms.source).toBe('[M: Cullity & Graham, Introduction to Magnetic Materials, 2nd ed. 2009; Coey 2010]')
    // METHODS §9.3 [R]: 10⁻⁶ erg/cm = 10 pJ/m, so 21 pJ/m = 2.1×10⁻⁶ erg/cm (power-of-ten form below 10⁻³).
    expect(constant(wrapper, 'Exchange stiffness A')).toEqual({ si: '21 pJ/m', cgs: '2.1×10⁻⁶ erg/cm', source: '[R, secondary: standard micromagnetic parameter sets]' })
    // 1 J/m³ = 10 erg/cm³ (METHODS §9.3 [R]): 48 kJ/m³ = 4.8×10⁵ erg/cm³, shown in full below 10⁶.
    expect(constant(wrapper, 'Anisotropy K')).toMatchObject({ si: '48 kJ/m³', cgs: '480000 erg/cm³' })
    expect(constant(wrapper, 'Curie temperature Tc')).toEqual({ si: '1043 K', cgs: '', source: '[R, secondary table citing Coey, Magnetism and Magnetic Materials, CUP 2010/2014]' })
    expect(wrapper.text()).toContain('Cubic K1 > 0: a 180° wall splits into two 90° walls')
  })

  it('When the sample is of iron, then Fe is chosen by itself and the predictions agree with the textbook formulas and the METHODS §7.3 worked values', async () => {
    const { wrapper } = await mountPanel({ sample: sampleDto({ material: 'Iron', thicknessNm: 1.1 }) })
    expect(chosen(wrapper, 'Material constants')).toEqual(['Fe'])
    const [A, K, MS] = [21e-12, 48e3, 1.71e6]

    // METHODS §7.3 table / check #47 (Fe: A 21 pJ/m, K1 48 kJ/m³): Δ = 20.92 nm, δ_B = 65.71 nm, σ_w = 4.016 mJ/m² (cubic 2.008).
    expect(theory(wrapper, 'Bloch wall parameter').predicted).toBe(`${shown(blochParameterNm(A, K))} nm`)
    expect(theory(wrapper, 'Bloch wall parameter').predicted).toBe('20.92 nm')
    expect(theory(wrapper, 'Bloch wall width').predicted).toBe(`${shown(blochWidthNm(A, K))} nm`)
    expect(theory(wrapper, 'Bloch wall width').predicted).toBe('65.71 nm')
    const wall = theory(wrapper, 'Wall energy σ_w')
    expect([wall.formula, wall.predicted]).toEqual(['4√(AK)', `${shown(wallEnergyMJ(A, K))} mJ/m²`])
    expect(wall.predicted).toBe('4.016 mJ/m²')
    // 1 mJ/m² = 1 erg/cm² (METHODS §9.3 [R]).
    expect(wall.other).toBe('4.016 erg/cm²')
    // Cubic K1 > 0: two 90° walls, σ ≈ 2√(AK1) = half the uniaxial value.
    expect(theory(wrapper, 'Wall energy, cubic K1 > 0').predicted).toBe(`${shown(wallEnergyMJ(A, K) / 2)} mJ/m²`)
    expect(theory(wrapper, 'Wall energy, cubic K1 > 0').predicted).toBe('2.008 mJ/m²')
    // METHODS check #51: l_ex = 3.381 nm (√2A form), 2.391 nm (√A form).
    const lex = theory(wrapper, 'Exchange length')
    expect(lex.predicted).toBe(`${shown(exchangeLengthNm(A, MS))} nm`)
    expect(lex.predicted).toBe('3.381 nm')
    expect(lex.other).toBe(`√(A/(μ0Ms²)) form: ${shown(exchangeLengthSqrtANm(A, MS))} nm`)
    expect(lex.other).toContain('2.391 nm')
    expect(theory(wrapper, 'Quality factor Q').predicted).toBe(shown(qualityFactor(K, MS), 3))
    // Kittel width for the sample's 1.1 nm: the Q ≪ 1 of Fe makes it indicative only.
    expect(theory(wrapper, 'Kittel stripe width D (t = 1.1 nm)').predicted).toBe(`${shown(kittelWidthNm(wallEnergyMJ(A, K) / 1e3, 1.1, MS))} nm`)
    expect(theory(wrapper, 'Kittel stripe period 2D').predicted).toBe(`${shown(2 * kittelWidthNm(wallEnergyMJ(A, K) / 1e3, 1.1, MS))} nm`)
    expect(wrapper.text()).toContain(`Q = ${qualityFactor(K, MS).toPrecision(2)} < 1: the Kittel model assumes Q ≫ 1`)
  })

  it('When the sample is of nickel (K1 < 0), then K shows with a true minus sign and the walls use |K1|, as in METHODS §7.3', async () => {
    const { wrapper } = await mountPanel({ sample: sampleDto({ material: 'nickel' }) })
    expect(chosen(wrapper, 'Material constants')).toEqual(['Ni'])
    // −4.5 kJ/m³ = −4.5×10⁴ erg/cm³ (1 J/m³ = 10 erg/cm³), minus sign U+2212.
    expect(constant(wrapper, 'Anisotropy K')).toMatchObject({ si: '\u22124.5 kJ/m³', cgs: '\u221245000 erg/cm³' })
    // METHODS check #49 (A 9 pJ/m, |K| 4.5 kJ/m³): δ_B = 140.5 nm, σ_w = 0.805 mJ/m².
    expect(theory(wrapper, 'Bloch wall width').predicted).toBe(`${shown(blochWidthNm(9e-12, 4.5e3))} nm`)
    expect(theory(wrapper, 'Bloch wall width').predicted).toBe('140.5 nm')
    expect(theory(wrapper, 'Wall energy σ_w').predicted).toBe(`${shown(wallEnergyMJ(9e-12, 4.5e3))} mJ/m²`)
    expect(theory(wrapper, 'Wall energy σ_w').predicted).toBe('0.805 mJ/m²')
    expect(wrapper.text()).toContain('K is negative (cubic K1 < 0): the wall formulas use |K|')
    // The cubic two-90°-wall row is for K1 > 0 only.
    expect([...tableRows(wrapper, 'Theory against measurement').keys()].some((q) => q.startsWith('Wall energy, cubic'))).toBe(false)
  })

  it('When the sample is of permalloy (K = 0), then no wall width, wall energy or Kittel width is predicted, and the panel says why', async () => {
    const { wrapper } = await mountPanel({ sample: sampleDto({ material: 'Py' }) })
    expect(chosen(wrapper, 'Material constants')).toEqual(['Permalloy Ni80Fe20'])
    expect(theory(wrapper, 'Bloch wall width').predicted).toBe('—')
    expect(theory(wrapper, 'Wall energy σ_w').predicted).toBe('—')
    expect(theory(wrapper, 'Kittel stripe width').predicted).toBe('—')
    // The exchange length needs no K: l_ex = √(2A/(μ0Ms²)) with A 13 pJ/m, Ms 0.8 MA/m.
    expect(theory(wrapper, 'Exchange length').predicted).toBe(`${shown(exchangeLengthNm(13e-12, 8e5))} nm`)
    expect(constant(wrapper, 'Curie temperature Tc')).toMatchObject({ si: '—', source: 'not tabulated' })
    expect(wrapper.text()).toContain('K = 0: no Bloch wall width, wall energy or Kittel width')
  })
})

describe('SampleTheoryPanel, comparing with measurements', () => {
  it('When the lab has a material named as the sample’s, then it is chosen and the Kittel width is compared with the stack run nearest M = 0', async () => {
    // The reference helper reproduces the published Kittel check first (METHODS §7.2 / check #52): σ_w 1 mJ/m², t 1 µm, Ms 1 MA/m → D = 76.58 nm.
    expect(shown(kittelWidthNm(1e-3, 1000, 1e6))).toBe('76.58')

    const sample = sampleDto()
    const measurements = measurementsOf(sample, {
      stackRuns: [sampleStackRunDto()],
      frames: [sampleFrameMeasurementDto(), sampleFrameMeasurementDto({ analysisId: 32, imageId: 5, imageName: 'KB24-A300_uncalibrated.tif', pixelSizeNm: null, meanWidthNm: null, periodNm: null })],
    })
    const { wrapper } = await mountPanel({ sample, measurements, materials: () => jsonResponse(200, [labMaterial()]) })

    expect(chosen(wrapper, 'Material constants')).toEqual(['Ta/CoFeB/MgO'])
    expect(constant(wrapper, 'Saturation magnetization Ms')).toMatchObject({ si: '1.1 MA/m', source: 'Own VSM and BLS measurements on KB24-A300, Elena Varga, 2026' })
    expect(constant(wrapper, 'Curie temperature Tc').source).toBe('not tabulated')
    // The newest stack run comes first, labelled by its frame nearest M = 0 (true minus sign).
    expect(chosen(wrapper, 'Compare with')).toEqual(['Stack run #7 · KB24-A300_field-sweep.tif · frame 20 (M/Ms = \u22120.013)'])
    expect((await openSelectOptions(wrapper, 'Compare with')).map((o) => o.textContent?.trim())).toEqual([
      'Stack run #7 · KB24-A300_field-sweep.tif · frame 20 (M/Ms = \u22120.013)',
      'KB24-A300_remanent.tif · frame 0 (saved analysis)',
    ])
    expect(wrapper.text()).toContain('1 measurement is in pixels only: calibrate the image to compare it with theory.')

    const [A, K, MS, T] = [15e-12, 800e3, 1.1e6, 1.1]
    const predictedD = kittelWidthNm(wallEnergyMJ(A, K) / 1e3, T, MS)
    const width = theory(wrapper, 'Kittel stripe width D (t = 1.1 nm)')
    expect(width.predicted).toBe(`${shown(predictedD)} nm`)
    expect(width.measured).toBe('410 nm mean width')
    expect(width.ratio).toBe(shown(410 / predictedD, 3))
    const period = theory(wrapper, 'Kittel stripe period 2D')
    expect([period.predicted, period.measured, period.ratio]).toEqual([`${shown(2 * predictedD)} nm`, '840 nm period', shown(840 / (2 * predictedD), 3)])
    // σ_w inferred from the measured width by the inverse Kittel form σ_w = c·μ0Ms²·D²/t.
    const inferred = KITTEL_C * MU0 * MS * MS * (410e-9) ** 2 / (T / NM) * 1e3
    expect(theory(wrapper, 'Wall energy σ_w').measured).toBe(`${shown(inferred)} mJ/m² from the width`)
    expect(theory(wrapper, 'Wall energy σ_w').ratio).toBe(shown(inferred / wallEnergyMJ(A, K), 3))

    await choose(wrapper, 'Compare with', 'KB24-A300_remanent.tif · frame 0 (saved analysis)')
    expect(theory(wrapper, 'Kittel stripe width').measured).toBe('500 nm mean width')
    expect(theory(wrapper, 'Kittel stripe width').ratio).toBe(shown(500 / predictedD, 3))
    expect(theory(wrapper, 'Kittel stripe period 2D').measured).toBe('1000 nm period')
  })

  it('When no measurement is calibrated, then "Compare with" is disabled and nothing measured is shown', async () => {
    const sample = sampleDto({ material: 'Fe' })
    const measurements = measurementsOf(sample, {
      stackRuns: [sampleStackRunDto({ pixelSizeNm: null, nearZeroFrame: { index: 20, magnetization: 0.01, meanWidthPx: 2.05, meanWidthNm: null, periodPx: 4.2, periodNm: null } })],
      frames: [sampleFrameMeasurementDto({ pixelSizeNm: null, meanWidthNm: null, periodNm: null })],
    })
    const { wrapper } = await mountPanel({ sample, measurements })
    expect(selectNamed(wrapper, 'Compare with').get('input').attributes('disabled')).toBeDefined()
    expect(selectNamed(wrapper, 'Compare with').text()).toContain('No calibrated measurement yet')
    expect(wrapper.text()).toContain('2 measurements are in pixels only')
    expect(theory(wrapper, 'Kittel stripe width').measured).toBe('')
    expect(theory(wrapper, 'Kittel stripe width').ratio).toBe('—')
  })
})

describe('SampleTheoryPanel, the lab’s materials', () => {
  it('When a microscopist adds a lab material starting from Fe, then the dialog starts from Fe’s constants, sends SI, and the new material is chosen', async () => {
    let created: LabMaterialDto | null = null
    const { wrapper, requests } = await mountPanel({
      sample: sampleDto({ material: 'Fe' }),
      extra: {
        'POST /api/labs/1/materials': (r) => {
          created = labMaterial({ id: 14, ...(r.body as object), createdAt: '2026-12-01T08:00:00.000Z', updatedAt: '2026-12-01T08:00:00.000Z' })
          return jsonResponse(201, created)
        },
      },
    })
    // Fe is built-in: it can be copied but not edited or removed.
    expect(wrapper.findAll('button').map((b) => b.text().trim())).toContain('Add lab material')
    expect(wrapper.findAll('button').map((b) => b.text().trim())).not.toContain('Edit')

    await getButton(wrapper, 'Add lab material').trigger('click')
    await flushPromises()
    const form = dialog(wrapper)
    // The form types MA/m, pJ/m and kJ/m³: Fe's 1.71e6 A/m, 21e-12 J/m and 48e3 J/m³.
    expect(getByLabel(form, 'Name').element.value).toBe('Fe (lab)')
    expect(getByLabel(form, 'Ms (MA/m)').element.value).toBe('1.71')
    expect(getByLabel(form, 'A (pJ/m)').element.value).toBe('21')
    expect(getByLabel(form, 'K or K1 (kJ/m³, signed)').element.value).toBe('48')
    expect(getByLabel(form, 'Tc (K, optional)').element.value).toBe('1043')
    // The copy names each constant's own source, as the built-in table lists them (shared/analysis/materials.ts):
    // Fe's Ms from the textbooks, A and K1 from the parameter sets, Tc from the Coey table.
    expect(getByLabel(form, 'Source').element.value).toBe(
      'Built-in table — Ms: [M: Cullity & Graham, Introduction to Magnetic Materials, 2nd ed. 2009; Coey 2010]; A, K1: [R, secondary: standard micromagnetic parameter sets]; Tc: [R, secondary table citing Coey, Magnetism and Magnetic Materials, CUP 2010/2014]',
    )

    // The parameter-set value of Ms (METHODS §7.3: "also list Fe Ms 1.70 MA/m").
    await getByLabel(form, 'Ms (MA/m)').setValue('1.7')
    await getByLabel(form, 'Source').setValue('Parameter set, Ms 1.70 MA/m (METHODS §7.3)')
    await getButton(form, 'Add material').trigger('click')
    await vi.waitFor(() => expect(requests.filter((r) => r.method === 'POST')).toHaveLength(1))
    await flushPromises()

    expect(requests.find((r) => r.method === 'POST')!.body).toEqual({ name: 'Fe (lab)', msAPerM: 1.7e6, aJPerM: 21e-12, kJPerM3: 48e3, tcK: 1043, source: 'Parameter set, Ms 1.70 MA/m (METHODS §7.3)' })
    expect(created).not.toBeNull()
    await vi.waitFor(() => expect(chosen(wrapper, 'Material constants')).toEqual(['Fe (lab)']))
    expect(constant(wrapper, 'Saturation magnetization Ms').si).toBe('1.7 MA/m')
    // μ0Ms for 1.70 MA/m.
    expect(constant(wrapper, 'Saturation magnetization Ms').cgs).toBe(`1700 emu/cm³ · μ0Ms = ${shown(MU0 * 1.7e6)} T`)
    expect(wrapper.findAll('button').map((b) => b.text().trim())).toEqual(expect.arrayContaining(['Edit', 'Remove']))
  })

  it('When a lab material is edited, then the dialog shows its values in MA/m, pJ/m, kJ/m³ and Save changes sends a PATCH in SI', async () => {
    const { wrapper, requests } = await mountPanel({
      materials: () => jsonResponse(200, [labMaterial()]),
      extra: { 'PATCH /api/labs/1/materials/12': (r) => jsonResponse(200, labMaterial({ ...(r.body as object), updatedAt: '2026-12-02T08:00:00.000Z' })) },
    })
    expect(chosen(wrapper, 'Material constants')).toEqual(['Ta/CoFeB/MgO'])
    await getButton(wrapper, 'Edit').trigger('click')
    await flushPromises()
    const form = dialog(wrapper)
    expect(document.body.textContent).toContain('Edit Ta/CoFeB/MgO')
    expect([getByLabel(form, 'Ms (MA/m)'), getByLabel(form, 'A (pJ/m)'), getByLabel(form, 'K or K1 (kJ/m³, signed)')].map((i) => i.element.value)).toEqual(['1.1', '15', '800'])

    await getByLabel(form, 'K or K1 (kJ/m³, signed)').setValue('-350')
    await getButton(form, 'Save changes').trigger('click')
    await vi.waitFor(() => expect(requests.filter((r) => r.method === 'PATCH')).toHaveLength(1))
    await flushPromises()

    const patch = requests.find((r) => r.method === 'PATCH')!
    expect(patch.url).toBe('/api/labs/1/materials/12')
    expect(patch.body).toEqual({ name: 'Ta/CoFeB/MgO', msAPerM: 1.1e6, aJPerM: 15e-12, kJPerM3: -350e3, tcK: null, source: 'Own VSM and BLS measurements on KB24-A300, Elena Varga, 2026' })
    expect(requests.some((r) => r.method === 'POST' || r.method === 'PUT')).toBe(false)
    await vi.waitFor(() => expect(constant(wrapper, 'Anisotropy K').si).toBe('\u2212350 kJ/m³'))
    expect(chosen(wrapper, 'Material constants')).toEqual(['Ta/CoFeB/MgO'])
  })

  it('When removing a lab material is confirmed, then it is deleted and the choice falls back to the sample’s material; cancelling sends nothing', async () => {
    const { wrapper, requests } = await mountPanel({
      materials: () => jsonResponse(200, [labMaterial()]),
      extra: { 'DELETE /api/labs/1/materials/12': () => jsonResponse(204) },
    })
    await getButton(wrapper, 'Remove').trigger('click')
    await vi.waitFor(async () => expect((await messageBox()).textContent).toContain('Remove “Ta/CoFeB/MgO” from the lab\'s materials? Everyone in the lab uses this table.'))
    await pressInMessageBox('Cancel')
    expect(requests.filter((r) => r.method === 'DELETE')).toEqual([])
    expect(chosen(wrapper, 'Material constants')).toEqual(['Ta/CoFeB/MgO'])

    await getButton(wrapper, 'Remove').trigger('click')
    await pressInMessageBox('Remove')
    await vi.waitFor(() => expect(requests.filter((r) => r.method === 'DELETE').map((r) => r.url)).toEqual(['/api/labs/1/materials/12']))
    await flushPromises()
    // "Ta/CoFeB/MgO" matches no built-in entry, so nothing is chosen any more.
    expect(chosen(wrapper, 'Material constants')).toEqual([])
    expect(wrapper.text()).toContain('Choose a material to see the predictions.')
  })

  it('When the person may not edit samples (an annotator), then the panel offers no way to add, edit or remove lab materials', async () => {
    const { wrapper } = await mountPanel({ role: 'annotator', materials: () => jsonResponse(200, [labMaterial()]) })
    expect(chosen(wrapper, 'Material constants')).toEqual(['Ta/CoFeB/MgO'])
    const buttons = wrapper.findAll('button').map((b) => b.text().trim())
    expect(buttons).not.toContain('Add lab material')
    expect(buttons).not.toContain('Edit')
    expect(buttons).not.toContain('Remove')
    expect(wrapper.findComponent(SampleTheoryMaterialDialog).exists()).toBe(false)
  })

  it('When the lab’s materials fail to load, then the panel says so, still offers the built-in table, and Retry loads them', async () => {
    let calls = 0
    const { wrapper, requests } = await mountPanel({
      materials: () => (++calls === 1 ? errorResponse(503, 'unavailable', 'The database is not answering.') : jsonResponse(200, [labMaterial()])),
    })
    expect(alertTexts(wrapper).join(' ')).toContain("Could not load the lab's materials")
    expect(alertTexts(wrapper).join(' ')).toContain('The database is not answering.')
    expect((await openSelectOptions(wrapper, 'Material constants')).map((o) => o.textContent?.trim())).toEqual(['Fe', 'Co', 'Ni', 'Nd2Fe14B', 'Permalloy Ni80Fe20'])
    await selectNamed(wrapper, 'Material constants').get('input').trigger('keydown', { key: 'Escape' })
    await flushPromises()

    await getButton(wrapper, 'Retry').trigger('click')
    await flushPromises()
    expect(requests.filter((r) => r.url === '/api/labs/1/materials')).toHaveLength(2)
    expect(alertTexts(wrapper)).toEqual([])
    // Once loaded, the lab's material named as the sample's is chosen.
    expect(chosen(wrapper, 'Material constants')).toEqual(['Ta/CoFeB/MgO'])
  })
})
