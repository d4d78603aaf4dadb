// Is something already listening on host:port, and is it Ligandry?
import { connect } from 'node:net';

/** @returns {Promise<'free'|'ligandry'|'other'>} */
export async function probe(host, port) {
  const open = await new Promise((resolve) => {
    const socket = connect({ host, port });
    socket.setTimeout(1000);
    socket.once('connect', () => { socket.destroy(); resolve(true); });
    socket.once('timeout', () => { socket.destroy(); resolve(false); });
    socket.once('error', () => resolve(false));
  });
  if (!open) return 'free';
  try {
    const res = await fetch(`http://${host}:${port}/api/health`, { signal: AbortSignal.timeout(2000) });
    const body = await res.json();
    return body?.service === 'ligandry' ? 'ligandry' : 'other';
  } catch {
    return 'other';
  }
}
