// `npm run bench:hostile`: the time to save and read a story whose 99,000-character body is built
// to make a careless parser slow (unclosed `[`, `<`, `![` by the thousand), beside a normal body
// of the same length, through the API as a builder uses it, and the longest stall of the event
// loop meanwhile. Prints figures, asserts nothing. Goal: hostile within a small factor of normal,
// no stall a person would notice (common practice: under 100 ms, no published source).
// Uses its own throwaway cluster (.data/postgres-bench-hostile), never the demo or test data.
import http from 'node:http';
import os from 'node:os';
import { monitorEventLoopDelay } from 'node:perf_hooks';
import { createApp } from '../server/app';
import { createFakeGithub } from '../server/fakes/github/fake-github';
import { localStorage } from '../server/storage/local-storage';
import { benchEnvironment, benchSession } from './lib/bench-env';
import { fakeAccounts } from './lib/run-local';

const RUNS = Number(process.env.BENCH_RUNS ?? 7);
const LENGTH = 99_000;

const fake = createFakeGithub({ clientId: 'benchproof-local', clientSecret: 'benchproof-local-secret', accounts: fakeAccounts(), port: 0 });
const fakeUrl = await fake.listen();
const { config, sequelize, logger, mediaDir, close } = await benchEnvironment('postgres-bench-hostile', 54363, { FAKE_GITHUB_URL: fakeUrl, SIGN_IN_RATE_LIMIT: '1000' });

const normalProse = 'The crank end float read 0.0047 in on the dial indicator, with the thrust faces clean and oiled. ';
const bodies: [string, string][] = [
  ['normal prose', normalProse.repeat(Math.ceil(LENGTH / normalProse.length)).slice(0, LENGTH)],
  ['99,000 unclosed "["', '['.repeat(LENGTH)],
  ['99,000 unclosed "<"', '<'.repeat(LENGTH)],
  ['49,500 unclosed "!["', '!['.repeat(LENGTH / 2)],
  ['"[a](" repeated', '[a]('.repeat(LENGTH / 4)],
];

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!;

try {
  const built = createApp({ config, sequelize, logger, storage: localStorage(mediaDir), queue: null });
  const server = http.createServer(built.app);
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
  const owner = await benchSession(server, 'demo-builder');
  const send = (verb: 'post' | 'patch', url: string, body: object) => owner.agent[verb](url).set('x-csrf-token', owner.token).send(body);
  const build = (await send('post', '/api/builds', { title: 'Hostile body benchmark (invented)' }).expect(201)).body.build as { id: number };

  console.log(`Machine: ${os.cpus().length} cores (${os.cpus()[0]?.model ?? 'unknown'}), Node ${process.version}; median of ${RUNS} requests each, ${LENGTH.toLocaleString('en')}-character bodies`);
  console.log(`${'body'.padEnd(24)} ${'save (PATCH)'.padStart(14)} ${'read (GET)'.padStart(12)} ${'build list'.padStart(12)} ${'longest stall'.padStart(15)}`);
  for (const [name, body] of bodies) {
    const story = (await send('post', `/api/builds/${build.id}/stories`, { title: `Hostile body: ${name}`, body: '' }).expect(201)).body.story as { id: number; lockVersion: number };
    let lockVersion = story.lockVersion;
    const save: number[] = [];
    const read: number[] = [];
    const list: number[] = [];
    const delay = monitorEventLoopDelay({ resolution: 10 });
    delay.enable();
    for (let i = 0; i < RUNS; i += 1) {
      // A different last character each time, so every save really writes and recounts.
      const text = body.slice(0, -1) + String.fromCharCode(97 + i);
      let t0 = performance.now();
      const saved = await send('patch', `/api/stories/${story.id}`, { body: text, lockVersion }).expect(200);
      save.push(performance.now() - t0);
      lockVersion = (saved.body.story as { lockVersion: number }).lockVersion;
      t0 = performance.now();
      await owner.agent.get(`/api/stories/${story.id}`).expect(200);
      read.push(performance.now() - t0);
      t0 = performance.now();
      await owner.agent.get(`/api/builds/${build.id}/stories`).expect(200);
      list.push(performance.now() - t0);
    }
    delay.disable();
    const ms = (x: number) => `${x.toFixed(1)} ms`.padStart(12);
    console.log(`${name.padEnd(24)} ${ms(median(save)).padStart(14)} ${ms(median(read))} ${ms(median(list))} ${`${(delay.max / 1e6).toFixed(1)} ms`.padStart(15)}`);
  }
  await new Promise<void>((r) => server.close(() => r()));
  await built.close();
} finally {
  await close();
  await fake.close();
}
