/**
 * Configuration cases for the loader's tests: the demo config (src/demo/config) with one file
 * edited, loaded from a temporary workspace, and the ConfigError it gives.
 */
import fs from 'node:fs';
import path from 'node:path';
import YAML from 'yaml';
import { ConfigError, loadConfig } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { workspacesPerTest } from '../helpers/workspace.js';

export const demoText = (name: string): string => fs.readFileSync(path.join(DEMO_CONFIG_DIR, name), 'utf8');

/** Call at the top level of a test file: config folders are removed after each test. */
export function configCases() {
  const workspace = workspacesPerTest();
  /** A config folder: the demo's files, with `files` (relative paths) written over them. */
  /** A workspace (config, store, inbox, outbox) whose config is the demo's with `files` written over it. */
  const workspaceWith = (files: Record<string, string>) => workspace({ configFiles: files });
  const configWith = (files: Record<string, string>): string => workspaceWith(files).paths.configDir;
  /** A config folder whose `name` is the demo's file parsed, edited by `edit`, and written back. */
  const configEdited = (name: string, edit: (doc: any) => void): string => {
    const doc = YAML.parse(demoText(name));
    edit(doc);
    return configWith({ [name]: YAML.stringify(doc) });
  };
  return { workspaceWith, configWith, configEdited };
}

/** The ConfigError loading `dir` throws; fails the test when it loads or throws anything else. */
export function configError(dir: string): ConfigError {
  try {
    loadConfig(dir);
  } catch (error) {
    if (error instanceof ConfigError) return error;
    throw error;
  }
  throw new Error('expected a ConfigError, but the config loaded');
}
