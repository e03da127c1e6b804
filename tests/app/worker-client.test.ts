import { describe, expect, it } from 'vitest';
import { AnalysisClient, AnalysisError, CancelledError, tileHelperCount } from '../../app/worker/client.ts';
import type { Reply, Request } from '../../app/worker/protocol.ts';

/** A stand-in for a Worker: records what the page posts and lets the test answer as the worker would. */
class FakeWorker {
  onmessage: ((ev: MessageEvent<Reply>) => void) | null = null;
  onerror: ((ev: ErrorEvent) => void) | null = null;
  posted: { msg: Request; transfer: Transferable[] }[] = [];
  terminated = false;
  postMessage(msg: Request, transfer: Transferable[] = []) { this.posted.push({ msg, transfer }); }
  terminate() { this.terminated = true; }
  reply(r: Reply) { this.onmessage?.({ data: r } as MessageEvent<Reply>); }
  fail(message: string) { this.onerror?.({ message, preventDefault() {} } as ErrorEvent); }
}

function setup() {
  const workers: FakeWorker[] = [];
  const client = new AnalysisClient(() => { const w = new FakeWorker(); workers.push(w); return w as unknown as Worker; });
  return { client, workers };
}

describe('AnalysisClient', () => {
  it('routes progress to the caller and resolves with the worker\'s value', async () => {
    const { client, workers } = setup();
    const stages: string[] = [];
    const p = client.call('forget', { key: 'a' }, (s) => stages.push(s));
    const { id } = workers[0].posted[0].msg;
    workers[0].reply({ id, type: 'progress', stage: 'working', fraction: 0.5 });
    workers[0].reply({ id, type: 'done', value: { forgotten: true } });
    await expect(p).resolves.toEqual({ forgotten: true });
    expect(stages).toEqual(['working']);
  });

  it('callInParts hands the early part over before the whole answer arrives', async () => {
    const { client, workers } = setup();
    const early: unknown[] = [];
    let settled = false;
    const p = client.callInParts('orient', { key: 'a', options: {} }, (v) => early.push(v));
    void p.then(() => { settled = true; });
    const { id } = workers[0].posted[0].msg;
    workers[0].reply({ id, type: 'partial', value: { result: { directorDeg: 12 }, timesMs: {} } });
    await new Promise((r) => setTimeout(r, 0));
    expect(early).toEqual([{ result: { directorDeg: 12 }, timesMs: {} }]);
    expect(settled).toBe(false);
    workers[0].reply({ id, type: 'done', value: { result: { directorDeg: 12 }, colour: null, timesMs: {} } });
    await expect(p).resolves.toMatchObject({ result: { directorDeg: 12 } });
    expect(early).toHaveLength(1);
  });

  it('turns a worker error into an AnalysisError carrying the message and hint', async () => {
    const { client, workers } = setup();
    const p = client.call('forget', { key: 'a' });
    const { id } = workers[0].posted[0].msg;
    workers[0].reply({ id, type: 'error', error: { name: 'InputError', message: 'x.png: truncated', hint: 'export it again' } });
    const e = await p.catch((x) => x);
    expect(e).toBeInstanceOf(AnalysisError);
    expect(e.name).toBe('InputError');
    expect(e.message).toBe('x.png: truncated');
    expect(e.hint).toBe('export it again');
  });

  it('decode transfers the bytes (no copy) and later calls do not send them again', async () => {
    const { client, workers } = setup();
    const bytes = new ArrayBuffer(8);
    const p = client.decode({ key: 'k', name: 'a.png', bytes: async () => bytes });
    await new Promise((r) => setTimeout(r, 0));
    const sent = workers[0].posted[0];
    expect(sent.msg.command).toBe('decode');
    expect(sent.transfer).toEqual([bytes]);
    workers[0].reply({ id: sent.msg.id, type: 'done', value: { name: 'a.png' } });
    await p;
    expect(client.holds('k')).toBe(true);
    await client.ensure({ key: 'k', name: 'a.png', bytes: async () => new ArrayBuffer(1) });
    expect(workers[0].posted).toHaveLength(1);
  });

  it('cancel stops the worker, rejects what was running with CancelledError, and the next call starts a fresh worker', async () => {
    const { client, workers } = setup();
    const p = client.call('forget', { key: 'a' });
    client.cancel();
    await expect(p).rejects.toBeInstanceOf(CancelledError);
    expect(workers[0].terminated).toBe(true);
    expect(client.holds('a')).toBe(false);
    void client.call('forget', { key: 'b' }).catch(() => undefined);
    expect(workers).toHaveLength(2);
  });

  it('ready() rejects with a readable message when the worker script fails (worker.onerror)', async () => {
    const { client, workers } = setup();
    const ready = client.ready();
    const running = client.call('forget', { key: 'a' });
    workers[0].fail('SyntaxError: Unexpected token');
    await expect(ready).rejects.toThrow(/analysis engine could not start.*SyntaxError: Unexpected token.*reload/);
    await expect(running).rejects.toThrow(/could not start/);
  });

  it('ready() rejects when opencv.js reports that it failed to start', async () => {
    const { client, workers } = setup();
    const ready = client.ready();
    workers[0].reply({ id: -1, type: 'startFailed', error: { name: 'Error', message: 'opencv.js did not start within 60 s', hint: '' } });
    await expect(ready).rejects.toThrow('the analysis engine could not start: opencv.js did not start within 60 s');
  });
});

describe('AnalysisClient with tile helpers', () => {
  function setupWithHelpers(n: number) {
    const workers: FakeWorker[] = [];
    const client = new AnalysisClient(() => { const w = new FakeWorker(); workers.push(w); return w as unknown as Worker; }, { tileHelpers: n });
    return { client, workers };
  }
  /** Answers the newest posted request of worker w as done. */
  const answer = (w: FakeWorker, value: unknown) => { const { id } = w.posted[w.posted.length - 1].msg; w.reply({ id, type: 'done', value }); };
  const tick = () => new Promise((r) => setTimeout(r, 0));

  it('starts the helpers only once the analysing worker is ready, then links each with its own channel', async () => {
    const { client, workers } = setupWithHelpers(1);
    void client.ready();
    await tick();
    expect(workers).toHaveLength(1);
    workers[0].reply({ id: -1, type: 'ready' });
    await tick();
    expect(workers).toHaveLength(2);
    workers[1].reply({ id: -1, type: 'ready' });
    await tick();
    const serve = workers[1].posted[0];
    expect(serve.msg.command).toBe('serveTiles');
    expect(serve.transfer).toHaveLength(1);
    answer(workers[1], { serving: true });
    await tick();
    const link = workers[0].posted[0];
    expect(link.msg.command).toBe('linkHelper');
    // The two ends of one channel: the helper's port is not the analysing worker's.
    expect(link.transfer[0]).not.toBe(serve.transfer[0]);
    answer(workers[0], { helpers: 1 });
    await expect(client.helpersLinked).resolves.toBe(1);
    for (const t of [...serve.transfer, ...link.transfer]) (t as MessagePort).close();
  });

  it('a helper that cannot start leaves the analysis to run alone', async () => {
    const { client, workers } = setupWithHelpers(1);
    void client.ready();
    workers[0].reply({ id: -1, type: 'ready' });
    await tick();
    workers[1].reply({ id: -1, type: 'startFailed', error: { name: 'Error', message: 'no memory', hint: '' } });
    await expect(client.helpersLinked).resolves.toBe(0);
    expect(workers[1].terminated).toBe(true);
    expect(workers[0].posted).toHaveLength(0);
  });

  it('cancel stops the helpers with the analysing worker', async () => {
    const { client, workers } = setupWithHelpers(1);
    void client.ready();
    workers[0].reply({ id: -1, type: 'ready' });
    await tick();
    workers[1].reply({ id: -1, type: 'ready' });
    await tick();
    answer(workers[1], { serving: true });
    await tick();
    answer(workers[0], { helpers: 1 });
    await client.helpersLinked;
    client.cancel();
    expect(workers[0].terminated && workers[1].terminated).toBe(true);
  });
});

describe('AnalysisClient: a stop while a helper is being linked', () => {
  it('does not link the stopped worker\'s helper to the next worker', async () => {
    const workers: FakeWorker[] = [];
    const client = new AnalysisClient(() => { const w = new FakeWorker(); workers.push(w); return w as unknown as Worker; }, { tileHelpers: 1 });
    const tick = () => new Promise((r) => setTimeout(r, 0));
    void client.ready();
    workers[0].reply({ id: -1, type: 'ready' });
    await tick();
    workers[1].reply({ id: -1, type: 'ready' });
    await tick();
    // The helper was asked to serve tiles; the user stops before it answers.
    client.cancel();
    const { id } = workers[1].posted[0].msg;
    workers[1].reply({ id, type: 'done', value: { serving: true } });
    await expect(client.helpersLinked).resolves.toBe(0);
    // No new worker was started to take the old helper's port.
    expect(workers).toHaveLength(2);
    expect(workers[0].posted.filter((p) => p.msg.command === 'linkHelper')).toHaveLength(0);
  });
});

describe('tileHelperCount', () => {
  it('gives one helper per spare core, at most three, and follows ?workers=N from 1 to 4', () => {
    expect(tileHelperCount('', 2)).toBe(1);
    expect(tileHelperCount('', 1)).toBe(0);
    expect(tileHelperCount('', 16)).toBe(3);
    expect(tileHelperCount('?workers=1', 8)).toBe(0);
    expect(tileHelperCount('?demo=1&workers=3', 2)).toBe(2);
    // nonsense is ignored, not obeyed
    for (const q of ['?workers=0', '?workers=9', '?workers=two', '?workers=1.5', '?workers=-1']) expect(tileHelperCount(q, 2)).toBe(1);
  });
});
