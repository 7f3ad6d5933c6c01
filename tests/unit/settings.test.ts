/**
 * The one settings table (common/settings.ts) against what VS Code reads: package.json's
 * `contributes.configuration` (the extension manifest format, code.visualstudio.com "Contribution
 * Points: contributes.configuration": type, default, enum, enumDescriptions, minimum, maximum,
 * scope, markdownDescription). Every property must be declared once, in the table, with the same
 * fields; the severity setting's code list must be the problem-code table's. Then the reader of
 * the configuration and the defaults the processes use come from the same table.
 */
import { describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as path from 'node:path';
import {
  DEFAULT_SETTINGS, SETTING_KEYS, SETTINGS, inSection, readServerSettings, readSetting, settingDefault,
} from '../../common/settings';
import { DEFAULT_SETTINGS as PROTOCOL_DEFAULTS } from '../../common/protocol';
import { ALL_CODES } from '../../common/problem-codes';
import { PANEL_LIMITS } from '../../server/src/node/analysis-service';

const root = path.join(__dirname, '../..');
const pkg = JSON.parse(fs.readFileSync(path.join(root, 'package.json'), 'utf8'));
const contributed: Record<string, Record<string, unknown>> = pkg.contributes.configuration.properties;

describe('package.json contributes.configuration = common/settings.ts', () => {
  it('the same settings, in the same order', () => {
    expect(Object.keys(contributed)).toEqual(SETTING_KEYS.map((k) => `hopscope.${k}`));
  });

  for (const key of SETTING_KEYS) {
    it(`hopscope.${key}: type, default, enum, limits, scope, description`, () => {
      const p = contributed[`hopscope.${key}`]!;
      const s = SETTINGS[key];
      expect(p.type).toBe(s.type);
      expect(p.default).toEqual(s.default);
      expect(p.enum).toEqual(s.enum);
      expect(p.enumDescriptions).toEqual(s.enumDescriptions);
      if (s.enum) expect((s.enumDescriptions ?? s.enum).length).toBe(s.enum.length);
      expect(p.minimum).toBe(s.minimum);
      expect(p.maximum).toBe(s.maximum);
      expect(p.scope).toBe(s.scope);
      expect(p.markdownDescription).toBe(s.markdownDescription);
      expect(p.description).toBe(s.description);
      expect(p.items).toEqual(s.items);
      expect(p.additionalProperties).toEqual(s.additionalProperties);
      expect(p.propertyNames).toEqual(s.propertyNames);
      // Nothing in package.json that the table does not hold.
      expect(JSON.parse(JSON.stringify(s))).toEqual(p);
      // The default is an allowed value.
      if (s.enum) expect(s.enum).toContain(s.default);
      if (typeof s.default === 'number') {
        expect(s.default).toBeGreaterThanOrEqual(s.minimum ?? -Infinity);
        expect(s.default).toBeLessThanOrEqual(s.maximum ?? Infinity);
      }
    });
  }

  it('hopscope.severity names exactly the problem codes of common/problem-codes.ts', () => {
    const names = (contributed['hopscope.severity']!.propertyNames as { enum: string[] }).enum;
    expect([...names].sort()).toEqual([...ALL_CODES].sort());
    expect(new Set(names).size).toBe(names.length);
  });

  it('the message direction has our own name: hopscope.sendingRow, 0 or 1, default 0', () => {
    expect(contributed['hopscope.sendingRow']).toMatchObject({ type: 'integer', enum: [0, 1], default: 0 });
    expect(Object.keys(contributed).filter((k) => /flow/i.test(k))).toEqual([]);
  });
});

describe('the defaults and the reader come from the table', () => {
  it('server defaults, panel limits', () => {
    expect(DEFAULT_SETTINGS).toEqual({ defaultDirectedness: 'auto', sendingRow: 0, maxFileSizeMB: 1024, exclude: [], severity: {} });
    expect(PROTOCOL_DEFAULTS).toBe(DEFAULT_SETTINGS);
    expect(PANEL_LIMITS).toMatchObject({ minDrawn: 10, maxDrawn: 20000, defaultDrawn: 2000 });
    expect(PANEL_LIMITS.defaultDrawn).toBe(contributed['hopscope.panel.maxDrawnNodes']!.default);
    expect(settingDefault('debug.maxInlineMB')).toBe(contributed['hopscope.debug.maxInlineMB']!.default);
  });

  it('fresh copies of array and object defaults', () => {
    const a = settingDefault('exclude');
    a.push('x');
    expect(settingDefault('exclude')).toEqual([]);
    expect(SETTINGS.exclude.default).toEqual([]);
  });

  it('readSetting: missing or wrong-typed values give the default; numbers are kept within the limits', () => {
    expect(readSetting('sendingRow', undefined)).toBe(0);
    expect(readSetting('sendingRow', 1)).toBe(1);
    expect(readSetting('sendingRow', 2)).toBe(0);
    expect(readSetting('sendingRow', '1')).toBe(0);
    expect(readSetting('defaultDirectedness', 'undirected')).toBe('undirected');
    expect(readSetting('defaultDirectedness', 'sideways')).toBe('auto');
    expect(readSetting('maxFileSizeMB', 0)).toBe(1);
    expect(readSetting('maxFileSizeMB', 'big')).toBe(1024);
    expect(readSetting('maxFileSizeMB', Number.NaN)).toBe(1024);
    expect(readSetting('panel.maxDrawnNodes', 5)).toBe(10);
    expect(readSetting('panel.maxDrawnNodes', 1e6)).toBe(20000);
    expect(readSetting('panel.maxDrawnNodes', 750)).toBe(750);
    expect(readSetting('exclude', ['a/**', 3, 'b'])).toEqual(['a/**', 'b']);
    expect(readSetting('exclude', 'a/**')).toEqual([]);
    expect(readSetting('severity', { 'self-loops': 'off', 'isolated-nodes': 'loud', 'no-such-code': 'error' })).toEqual({ 'self-loops': 'off' });
    expect(readSetting('severity', ['self-loops'])).toEqual({});
  });

  it('readServerSettings reads VS Code\'s nested section (workspace/configuration) and flat keys', () => {
    const section = {
      defaultDirectedness: 'directed', sendingRow: 1, maxFileSizeMB: 8, exclude: ['raw/**'],
      severity: { 'self-loops': 'warning' }, panel: { maxDrawnNodes: 300 }, trace: { server: 'off' },
    };
    expect(readServerSettings(inSection(section))).toEqual({
      defaultDirectedness: 'directed', sendingRow: 1, maxFileSizeMB: 8, exclude: ['raw/**'], severity: { 'self-loops': 'warning' },
    });
    expect(inSection(section)('panel.maxDrawnNodes')).toBe(300);
    expect(inSection({ 'panel.maxDrawnNodes': 40 })('panel.maxDrawnNodes')).toBe(40);
    expect(readServerSettings(inSection(null))).toEqual(DEFAULT_SETTINGS);
  });
});
