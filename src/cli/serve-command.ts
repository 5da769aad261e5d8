import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { isIP, type AddressInfo } from 'node:net';
import { createServer } from '../server/app.js';
import { BadInput } from './cli-errors.js';
import { runSimulateCommand } from './simulate-command.js';

export interface ServeOptions { port: string; host: string }

/** The package root: dist/cli → two levels up; src/cli under tsx likewise. */
const packageRoot = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');

export async function runServeCommand(file: string | undefined, options: ServeOptions): Promise<void> {
  const port = Number(options.port);
  if (!Number.isInteger(port) || port < 0 || port > 65535) {
    throw new BadInput(`--port: expected a whole number from 0 to 65535 (0 for any free port), found ${JSON.stringify(options.port)}`);
  }
  if (file) await runSimulateCommand(file, {});
  const server = createServer({
    scenariosDir: join(packageRoot, 'scenarios'), webDir: join(packageRoot, 'dist', 'web'), readmeFile: join(packageRoot, 'README.md'),
    warmWorkers: true,
    // Bound by name (not an address): that name is a Host the page may be reached by.
    ...(isIP(options.host) === 0 ? { extraHostNames: [options.host] } : {}),
  });
  const listener = server.app.listen(port, options.host);
  await new Promise<void>((ok, fail) => {
    listener.once('listening', ok);
    listener.once('error', (error: NodeJS.ErrnoException) => {
      fail(new BadInput(`--port/--host: cannot listen on ${options.host}:${port} (${error.code ?? error.message})`));
    });
  });
  const { port: actual } = listener.address() as AddressInfo;
  const scenarioParam = file ? `?scenario=${encodeURIComponent(file.replace(/^.*[\\/]/, '').replace(/\.json$/, ''))}` : '';
  process.stdout.write(`\nflyclamp page: http://${options.host.includes(':') ? `[${options.host}]` : options.host}:${actual}/${scenarioParam}\n(Ctrl-C stops the server)\n`);
  const stop = (): void => {
    listener.close();
    listener.closeAllConnections(); // keep-alive connections would hold the close open
    void server.close().then(() => process.exit(0));
  };
  process.once('SIGINT', stop);
  process.once('SIGTERM', stop);
}
