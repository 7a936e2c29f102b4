import type { Command } from 'commander';
import type { CliIo } from './io.js';

export function addDetectionCalcCommands(_calc: Command, _io: CliIo): void {}
