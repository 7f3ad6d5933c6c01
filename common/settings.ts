/**
 * Every `hopscope.*` setting, declared once. From this table come the defaults (the language
 * server's, the panel's drawn-node limit, Inspect as Graph's inline limit), the one reader of the
 * configuration (the extension and the language server both call `readSetting`), and
 * package.json's `contributes.configuration`, which tests/unit/settings.test.ts compares with it
 * property by property (`node scripts/write-settings.mjs` writes that block from this table).
 */
import { ALL_CODES } from './problem-codes';
import type { ProblemCode, SendingRow } from './report';

export type SeverityOverride = 'error' | 'warning' | 'info' | 'off';

/** The value of each setting, by key without the `hopscope.` prefix. */
export interface SettingValues {
  defaultDirectedness: 'auto' | 'directed' | 'undirected';
  sendingRow: SendingRow;
  maxFileSizeMB: number;
  exclude: string[];
  severity: Partial<Record<ProblemCode, SeverityOverride>>;
  'debug.maxInlineMB': number;
  'panel.maxDrawnNodes': number;
  'trace.server': 'off' | 'messages' | 'verbose';
}
export type SettingKey = keyof SettingValues;

/** One setting as package.json declares it (a JSON Schema fragment plus VS Code's own fields). */
export interface SettingSpec<T> {
  type: 'string' | 'integer' | 'number' | 'array' | 'object';
  default: T;
  enum?: readonly T[];
  enumDescriptions?: readonly string[];
  minimum?: number;
  maximum?: number;
  items?: { readonly type: 'string' };
  additionalProperties?: { readonly type: 'string'; readonly enum: readonly SeverityOverride[] };
  propertyNames?: { readonly enum: readonly string[] };
  /** `window`: one value per window; `resource`: may differ per folder. */
  scope: 'window' | 'resource';
  markdownDescription?: string;
  description?: string;
}

const SEVERITY_VALUES: readonly SeverityOverride[] = ['error', 'warning', 'info', 'off'];

/** The table. Order = the order in package.json and in the Settings editor. */
export const SETTINGS: { readonly [K in SettingKey]: SettingSpec<SettingValues[K]> } = {
  defaultDirectedness: {
    type: 'string',
    enum: ['auto', 'directed', 'undirected'],
    enumDescriptions: [
      'Decide from the data: missing reverse edges are reported when most pairs have their reverse.',
      'Treat graphs as directed unless a hopscope.json says otherwise: one-way edges are expected.',
      'Treat graphs as undirected unless a hopscope.json says otherwise: every missing reverse edge is an error.',
    ],
    default: 'auto',
    scope: 'resource',
    markdownDescription: 'How to read a graph whose `hopscope.json` does not say whether it is directed.',
  },
  sendingRow: {
    type: 'integer',
    enum: [0, 1],
    enumDescriptions: [
      'Row 0 of an edge index (the first column of an edge list) sends, row 1 receives: a node hears from the nodes with edges into it.',
      'Row 1 of an edge index (the second column of an edge list) sends, row 0 receives: a node hears from the nodes its edges point to.',
    ],
    default: 0,
    scope: 'resource',
    markdownDescription: 'Which row of an edge index sends messages in the receptive-field panel (`0` or `1`). A `hopscope.json` with `"sendingRow"` overrides it for its graphs.',
  },
  maxFileSizeMB: {
    type: 'number',
    default: 1024,
    minimum: 1,
    scope: 'resource',
    markdownDescription: 'Files larger than this (MiB) are listed but not read: not checked, not shown in the tensor viewer, not analysed in the receptive-field panel.',
  },
  exclude: {
    type: 'array',
    items: { type: 'string' },
    default: [],
    scope: 'resource',
    markdownDescription: 'Glob patterns of files never checked, in addition to `#files.exclude#` (e.g. `data/raw/**`).',
  },
  severity: {
    type: 'object',
    default: {},
    scope: 'resource',
    markdownDescription: 'Severity per problem code, e.g. `{ "isolated-nodes": "off", "self-loops": "warning" }`.',
    additionalProperties: { type: 'string', enum: SEVERITY_VALUES },
    propertyNames: { enum: ALL_CODES },
  },
  'debug.maxInlineMB': {
    type: 'number',
    default: 64,
    minimum: 1,
    scope: 'window',
    markdownDescription: 'Largest value (MiB) that **Inspect as Graph** copies through the debugger itself: always for JavaScript, and for Python when the file the debuggee saved cannot be read from here (a debuggee in a container or on another machine).',
  },
  'panel.maxDrawnNodes': {
    type: 'number',
    default: 2000,
    minimum: 10,
    maximum: 20000,
    scope: 'resource',
    markdownDescription: 'Most nodes the receptive-field panel draws. A larger field is drawn as a fixed sample (near hops in full, far hops sampled) and the panel says "showing X of Y"; above 1,500 drawn nodes and edges it draws on a canvas instead of SVG.',
  },
  'trace.server': {
    type: 'string',
    enum: ['off', 'messages', 'verbose'],
    default: 'off',
    scope: 'window',
    description: 'Log the messages between VS Code and the Hopscope language server.',
  },
};

export const SETTING_KEYS = Object.keys(SETTINGS) as SettingKey[];

/** The settings the language server uses; the client sends them as initialization options too. */
export type ServerSettings = Pick<SettingValues, 'defaultDirectedness' | 'sendingRow' | 'maxFileSizeMB' | 'exclude' | 'severity'>;
export const SERVER_SETTING_KEYS = ['defaultDirectedness', 'sendingRow', 'maxFileSizeMB', 'exclude', 'severity'] as const satisfies readonly (keyof ServerSettings)[];

/** The default of one setting (a fresh copy for arrays and objects). */
export function settingDefault<K extends SettingKey>(key: K): SettingValues[K] {
  const d = SETTINGS[key].default;
  return (Array.isArray(d) ? [...d] : typeof d === 'object' && d !== null ? { ...d } : d) as SettingValues[K];
}

export const DEFAULT_SETTINGS: Readonly<ServerSettings> = Object.freeze(readServerSettings(() => undefined));

/**
 * A configured value made safe: the table's default when it is missing or of the wrong type or
 * not one of the allowed values; a number outside minimum..maximum is moved to the nearer end (as
 * the code that read each setting on its own did); severity entries with an unknown code or value
 * are left out.
 */
export function readSetting<K extends SettingKey>(key: K, raw: unknown): SettingValues[K] {
  const spec = SETTINGS[key] as SettingSpec<unknown>;
  if (raw === undefined || raw === null) return settingDefault(key);
  switch (spec.type) {
    case 'integer':
    case 'number': {
      if (typeof raw !== 'number' || !Number.isFinite(raw)) return settingDefault(key);
      if (spec.enum) return (spec.enum.includes(raw) ? raw : settingDefault(key)) as SettingValues[K];
      if (spec.type === 'integer' && !Number.isInteger(raw)) return settingDefault(key);
      return Math.min(spec.maximum ?? Infinity, Math.max(spec.minimum ?? -Infinity, raw)) as SettingValues[K];
    }
    case 'string':
      if (typeof raw !== 'string' || (spec.enum && !spec.enum.includes(raw))) return settingDefault(key);
      return raw as SettingValues[K];
    case 'array':
      if (!Array.isArray(raw)) return settingDefault(key);
      return raw.filter((x): x is string => typeof x === 'string') as SettingValues[K];
    case 'object': {
      if (typeof raw !== 'object' || Array.isArray(raw)) return settingDefault(key);
      const names = spec.propertyNames?.enum;
      const values = spec.additionalProperties?.enum as readonly unknown[] | undefined;
      const out: Record<string, unknown> = {};
      for (const [k, v] of Object.entries(raw)) {
        if ((!names || names.includes(k)) && (!values || values.includes(v))) out[k] = v;
      }
      return out as SettingValues[K];
    }
  }
}

/**
 * The language server's settings from a lookup by key (`panel.maxDrawnNodes` style): VS Code's
 * `getConfiguration('hopscope').get`, or `inSection` of what `workspace/configuration` returned.
 */
export function readServerSettings(lookup: (key: SettingKey) => unknown): ServerSettings {
  const out: Partial<Record<keyof ServerSettings, unknown>> = {};
  for (const key of SERVER_SETTING_KEYS) out[key] = readSetting(key, lookup(key));
  return out as ServerSettings;
}

/** A lookup into the `hopscope` section as JSON: nested (`{ panel: { maxDrawnNodes } }`) or flat. */
export function inSection(section: unknown): (key: SettingKey) => unknown {
  return (key) => {
    if (typeof section !== 'object' || section === null) return undefined;
    const flat = (section as Record<string, unknown>)[key];
    if (flat !== undefined) return flat;
    let at: unknown = section;
    for (const part of key.split('.')) {
      if (typeof at !== 'object' || at === null) return undefined;
      at = (at as Record<string, unknown>)[part];
    }
    return at;
  };
}
