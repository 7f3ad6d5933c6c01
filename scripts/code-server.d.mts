// Types of scripts/code-server.mjs for the TypeScript tests.
import type { ChildProcess } from 'node:child_process';

export const ROOT: string;
export const CS_DIR: string;
export const CODE_SERVER_BIN: string;
export const NODE24_BIN: string;
export const CHROMIUM: string;
export const CHROMIUM_ARGS: string[];
export const QUIET_SETTINGS: Record<string, unknown>;

export interface Profile {
  base: string;
  userData: string;
  exts: string;
  config: string;
  log: string;
  home?: string;
  tmp?: string;
}

export interface CodeServer {
  port: number;
  url: string;
  proc: ChildProcess;
  stop(): Promise<void>;
  exited: Promise<number | string | null>;
}

export const CODE_SERVER_VERSION: string | undefined;
export function codeServerInstalled(): boolean;
export function makeProfile(base: string, opts?: { isolate?: boolean; settings?: Record<string, unknown> }): Profile;
export function installVsix(profile: Profile, vsix: string): void;
export function portFree(port: number, host?: string): Promise<boolean>;
export function startCodeServer(profile: Profile, opts?: { port?: number; extraArgs?: string[]; echo?: boolean }): Promise<CodeServer>;
export function workbenchUrl(base: string, folder: string, payload?: [string, string][]): string;
export function remoteUri(base: string, absPath: string): string;
export function copyDemo(dest: string): string;
export function extensionHostLogs(profile: Profile): string[];
