/**
 * `ropewatch listen --port N`: receives HL7 v2 result messages over MLLP (src/hl7/listener.ts),
 * stores each in its own transaction and only then acknowledges it; writes each message's
 * receipt, then rebuilds the outputs of the sites it touched and delivers alerts, as `watch`
 * does for a dropped file. Binds to localhost unless told otherwise; stops on SIGINT/SIGTERM
 * after the message in hand. Can run beside `watch` on the same store.
 */
import type { Command } from 'commander';
import { addCommonOptions, type CommonOptions } from '../commonOptions.js';
import type { CliIo } from '../io.js';
import { parseIntegerOption } from '../parseArgs.js';
import { stampLines } from '../stampLines.js';

interface ListenOptions extends CommonOptions {
  port: string;
  host: string;
}

export function registerListen(program: Command, io: CliIo): void {
  addCommonOptions(
    program
      .command('listen')
      .description(
        'receive HL7 v2 result messages (ORU^R01) over MLLP; each is stored, then acknowledged (MSA AA, AE or AR), until stopped (SIGINT/SIGTERM)',
      )
      .requiredOption('--port <n>', 'TCP port to listen on (0: any free port, printed)')
      .option('--host <address>', 'address to bind (default localhost only)', '127.0.0.1'),
  ).action(async (options: ListenOptions) => {
    const port = parseIntegerOption('--port', options.port, 0, 65_535);
    const { catchUp, deliverOwedAlerts, OutputError, regenerateOutputs, withWorkspace } = await import(
      '../commandModules.js'
    );
    const { startListener } = await import('../../hl7/listener.js');
    const { writeReceipts } = await import('../../pipeline.js');
    const log = stampLines(io);
    await withWorkspace(log, options, async (ws) => {
      catchUp(ws, log);
      const listener = await startListener({
        host: options.host,
        port,
        deps: { config: ws.config, store: ws.store, now: ws.now },
        log: (line) => log.stdout(`${line}\n`),
        afterStored: async (receipt) => {
          writeReceipts(ws, receipt);
          if (receipt.status === 'accepted' && receipt.sites.length > 0) {
            try {
              regenerateOutputs(ws, receipt.sites);
            } catch (error) {
              if (!(error instanceof OutputError)) throw error;
              log.stderr(`ropewatch: ${receipt.file} stored, but ${error.message}\n`);
            }
          }
          await deliverOwedAlerts(ws, log);
        },
      });
      log.stdout(`listening for MLLP on ${options.host}:${listener.port} (stop with Ctrl-C)\n`);
      await (io.stopSignal ?? new Promise<void>(() => {}));
      await listener.close();
      log.stdout('stopped\n');
    });
  });
}
