/**
 * Supply chain (hardening issue, item 6): the lockfile is committed and complete, every version is pinned, every
 * package comes from the npm registry with an integrity hash, and no install script runs — one in the tree
 * (skia-canvas, an optional dependency of image-js that we never use) would download a binary from outside the
 * registries, so the project's installer runs `npm ci --ignore-scripts`.
 */
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'

interface LockEntry {
  version?: string
  resolved?: string
  integrity?: string
  link?: boolean
  hasInstallScript?: boolean
}

const manifest = JSON.parse(readFileSync('package.json', 'utf8')) as { scripts: Record<string, string>; dependencies: Record<string, string>; devDependencies: Record<string, string> }
const lock = JSON.parse(readFileSync('package-lock.json', 'utf8')) as { lockfileVersion: number; packages: Record<string, LockEntry> }
const entries = Object.entries(lock.packages).filter(([path, entry]) => path !== '' && !entry.link)
const direct = { ...manifest.dependencies, ...manifest.devDependencies }

/**
 * Packages of the tree that declare an install script, and why none has to run: the installer skips them all.
 */
const INSTALL_SCRIPTS_SKIPPED: Record<string, string> = {
  esbuild: 'its install script only checks and links the binary, which its platform package (@esbuild/linux-x64) already holds',
  'skia-canvas': 'optional dependency of image-js, used only for drawing text; its script downloads a prebuilt binary from outside the npm registry',
}

describe('supply chain', () => {
  it('When installed, then every direct dependency is pinned to one exact version, and the lockfile holds that version', () => {
    expect(lock.lockfileVersion).toBe(3)
    const loose = Object.entries(direct).filter(([, version]) => !/^\d+\.\d+\.\d+$/.test(version))
    expect(loose).toEqual([])
    const differing = Object.entries(direct).filter(([name, version]) => lock.packages[`node_modules/${name}`]?.version !== version)
    expect(differing).toEqual([])
  })

  it('When installed, then every package comes from the npm registry and is checked against a SHA-512 integrity hash', () => {
    expect(entries.length).toBeGreaterThan(100)
    const unchecked = entries.filter(([, entry]) => !/^sha512-[A-Za-z0-9+/]+=*$/.test(entry.integrity ?? '')).map(([path]) => path)
    expect(unchecked).toEqual([])
    // Resolved addresses are left out of the lockfile (the registry set in npm's configuration is used); any that is
    // written must be the registry's, never a git repository, a file or another server's tarball.
    const elsewhere = entries.filter(([, entry]) => entry.resolved !== undefined && !entry.resolved.startsWith('https://registry.npmjs.org/')).map(([path, entry]) => `${path} ${entry.resolved}`)
    expect(elsewhere).toEqual([])
  })

  it('When installed, then no install script runs: the installer passes --ignore-scripts and the project has no install hooks of its own', () => {
    const withScripts = entries.filter(([, entry]) => entry.hasInstallScript).map(([path]) => path.replace(/^.*node_modules\//, ''))
    expect(withScripts.filter((name) => !(name in INSTALL_SCRIPTS_SKIPPED))).toEqual([])
    const installer = readFileSync('scripts/lib.sh', 'utf8')
    const installs = installer.match(/npm (ci|install)\b[^\n]*/g) ?? []
    expect(installs.length).toBeGreaterThan(0)
    for (const command of installs) expect(command).toContain('--ignore-scripts')
    const hooks = Object.keys(manifest.scripts).filter((name) => /^(pre|post)?(install|prepare)$/.test(name))
    expect(hooks).toEqual([])
  })
})
