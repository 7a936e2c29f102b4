import type { Command } from 'commander';
import type { CliIo } from './io.js';

export function addSpatialCalcCommand(_calc: Command, _io: CliIo): void {}
