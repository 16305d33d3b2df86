import { AnalyzeOptionsError } from './share-analyzer';
import { WavFormatError, type WavErrorCode } from './wav-header';

// An error thrown while measuring a share crosses to the caller as plain data (a worker's message
// cannot carry a class) and is rebuilt there. The engine's own errors keep their class, since
// callers treat a damaged file or a bad option as final; others say where they came from.

export interface ShareErrorData {
  name: string;
  message: string;
  code?: string;
}

export function shareErrorData(err: unknown): ShareErrorData {
  const e = err instanceof Error ? err : new Error(String(err));
  const code = (e as { code?: unknown }).code;
  return { name: e.name, message: e.message, ...(typeof code === 'string' ? { code } : {}) };
}

/** `where` names the thread or worker, for errors that are not the engine's own. */
export function shareErrorFromData(e: ShareErrorData, where: string): Error {
  if (e.name === 'WavFormatError' && e.code) return new WavFormatError(e.code as WavErrorCode, e.message);
  if (e.name === 'AnalyzeOptionsError') return new AnalyzeOptionsError(e.message);
  return new Error(`${where} failed: ${e.message}`);
}
