/** A server in its own process, so a test can kill it as a crash would. Prints its URL as JSON. */
import { startServer } from '../../server/main';

startServer(process.env)
  .then((s) => process.stdout.write(`${JSON.stringify({ url: s.url })}\n`))
  .catch((err: unknown) => {
    process.stderr.write(`${err instanceof Error ? err.message : String(err)}\n`);
    process.exit(1);
  });
