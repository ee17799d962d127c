/**
 * Loading and merging configurations: built-in defaults ← profile (config/<name>.json) ← --config
 * file ← command-line options. Validation messages name the file and the field.
 */
import { readFileSync, existsSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ConfigError } from '../errors.js';
import { configSchema, type HindcastConfig } from './schema.js';

type Json = Record<string, unknown>;

function isPlainObject(v: unknown): v is Json {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** Deep merge of plain objects; arrays and scalars of `over` replace those of `base`. */
export function deepMerge(base: Json, over: Json): Json {
  const out: Json = { ...base };
  for (const [k, v] of Object.entries(over)) {
    if (v === undefined) continue;
    out[k] = isPlainObject(v) && isPlainObject(out[k]) ? deepMerge(out[k] as Json, v) : v;
  }
  return out;
}

/** The folder holding the built-in profiles (config/ at the package root). */
export function profilesDir(): string {
  let dir = dirname(fileURLToPath(import.meta.url));
  for (let i = 0; i < 5; i++) {
    const c = join(dir, 'config');
    if (existsSync(join(c, 'default.json'))) return c;
    dir = dirname(dir);
  }
  throw new ConfigError('config', 'cannot find the built-in profiles folder (config/)');
}

function readJson(path: string): Json {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (e) {
    throw new ConfigError(path, `cannot read: ${(e as Error).message}`);
  }
  let v: unknown;
  try {
    v = JSON.parse(text);
  } catch (e) {
    throw new ConfigError(path, `not valid JSON: ${(e as Error).message}`);
  }
  if (!isPlainObject(v)) throw new ConfigError(path, 'must hold a JSON object');
  return v;
}

/** Validate a merged object; messages list each bad field by its dotted path. */
export function validateConfig(obj: unknown, source: string): HindcastConfig {
  const r = configSchema.safeParse(obj);
  if (!r.success) {
    const lines = r.error.issues.map((i) => `${i.path.join('.') || '(top level)'}: ${i.message}`);
    throw new ConfigError(source, `invalid configuration:\n  ${lines.join('\n  ')}`);
  }
  return r.data;
}

export function listProfiles(): string[] {
  return ['default', 'pedestrian', 'vehicle', 'drone'];
}

export interface LoadOptions {
  profile?: string;
  configFile?: string;
  overrides?: Json;
  /** Where the overrides come from, for error messages (default "the settings given"; the CLI: "command-line options"). */
  overridesSource?: string;
}

export function loadConfig(opt: LoadOptions = {}): HindcastConfig {
  const dir = profilesDir();
  let merged: Json = readJson(join(dir, 'default.json'));
  const sources = ['config/default.json'];
  if (opt.profile && opt.profile !== 'default') {
    const p = join(dir, `${opt.profile}.json`);
    if (!/^[a-z0-9-]+$/i.test(opt.profile) || !existsSync(p))
      throw new ConfigError('--profile', `unknown profile "${opt.profile}" (available: ${listProfiles().join(', ')})`);
    merged = deepMerge(merged, readJson(p));
    sources.push(`config/${opt.profile}.json`);
  }
  if (opt.configFile) {
    const path = resolve(opt.configFile);
    merged = deepMerge(merged, readJson(path));
    sources.push(opt.configFile);
  }
  if (opt.overrides && Object.keys(opt.overrides).length > 0) {
    merged = deepMerge(merged, opt.overrides);
    sources.push(opt.overridesSource ?? 'the settings given');
  }
  return validateConfig(merged, sources.join(' + '));
}
