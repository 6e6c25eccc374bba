import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { accessSync, closeSync, constants, existsSync, openSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { hostname, totalmem, userInfo } from 'node:os';
import { delimiter, join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { edgewise, tempDir } from '../support/cli.ts';
import { filmRecipe } from '../support/recipes.ts';

/**
 * A sweep on a real Slurm cluster: munged, slurmctld and slurmd from the distribution's
 * packages (Debian: munge, slurmctld, slurmd, slurm-client; .ci/run installs them) are
 * started on 127.0.0.1 with every file in this test's own folder; the Slurm script that
 * `edgewise sweep --plan --scheduler slurm` prints submits a 3-task job array of
 * `--shard auto` tasks and the merge with `--dependency=afterok`; the merged sweep.csv must
 * equal a local sweep of the same recipe byte for byte, timing columns aside.
 *
 * If the binaries are present (or CI=true) the test runs, and a cluster that cannot start
 * fails it with the reason. On a machine without them (and not CI) it is reported as skipped,
 * with the packages to install in its name: never as passed.
 */
const DAEMONS = ['munged', 'slurmctld', 'slurmd'] as const;
const CLIENTS = ['sbatch', 'scontrol', 'sinfo', 'scancel', 'squeue'] as const;
/** Each wait is bounded; the whole test takes well under its 240 s timeout. */
const START_SECONDS = 30;
const JOB_SECONDS = 150;

/** The executable's path: on PATH, or in the sbin folders where Debian puts the daemons. */
function findBinary(name: string): string | null {
  const folders = [...(process.env.PATH ?? '').split(delimiter), '/usr/sbin', '/sbin', '/usr/local/sbin'];
  for (const folder of folders) {
    const path = join(folder, name);
    try {
      accessSync(path, constants.X_OK);
      return path;
    } catch {
      // not here
    }
  }
  return null;
}

const binaries = Object.fromEntries([...DAEMONS, ...CLIENTS].map((n) => [n, findBinary(n)])) as Record<(typeof DAEMONS)[number] | (typeof CLIENTS)[number], string | null>;
const missing = Object.entries(binaries).filter(([, p]) => p === null).map(([n]) => n);
const required = process.env.CI === 'true' || missing.length === 0;

const recipe = {
  ...filmRecipe({ widthUm: 8, windows: [[3, 5]], background: 1e15, dose: 1e13, temperatureC: 1100, minutes: 10 }),
  title: 'a sweep on Slurm (test)',
  sweep: { widthsUm: '0.5:0.5:1.5', set: { 'steps[1].minutes': [10, 20] } },
};

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/** A TCP port nobody listens on now (the kernel's pick). */
function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = createServer();
    server.once('error', reject);
    server.listen(0, '127.0.0.1', () => {
      const { port } = server.address() as { port: number };
      server.close(() => resolve(port));
    });
  });
}

/** The last lines of a log, for a failure message. */
function tail(path: string, lines = 15): string {
  return existsSync(path) ? readFileSync(path, 'utf8').trimEnd().split('\n').slice(-lines).join('\n') : '(no log)';
}

/** sweep.csv without its timing columns (any whose name ends in Seconds or Ms); there are none today. */
function withoutTiming(csv: string): string {
  const lines = csv.split('\n');
  const keep = lines[0].split(',').map((name) => !/(Seconds|Ms)$/.test(name));
  return lines.map((l) => (l === '' ? l : l.split(',').filter((_, k) => keep[k] ?? true).join(','))).join('\n');
}

class Cluster {
  readonly children: { name: string; child: ChildProcess; log: string }[] = [];
  readonly env: NodeJS.ProcessEnv;
  readonly conf: string;
  readonly jobs: string[] = [];

  constructor(readonly dir: string) {
    this.conf = join(dir, 'slurm.conf');
    this.env = { ...process.env, SLURM_CONF: this.conf };
  }

  /** Starts a daemon in the foreground, its output to a log in the folder; remembers its PID. */
  start(name: (typeof DAEMONS)[number], args: string[]): void {
    const log = join(this.dir, `${name}.out`);
    const fd = openSync(log, 'a');
    const child = spawn(binaries[name]!, args, { stdio: ['ignore', fd, fd], env: this.env });
    closeSync(fd);
    child.on('error', () => {});
    this.children.push({ name, child, log });
  }

  /** Why a daemon has ended already, or null while all run. */
  dead(): string | null {
    for (const { name, child, log } of this.children) {
      if (child.exitCode !== null || child.signalCode !== null) {
        return `${name} ended (${child.exitCode ?? child.signalCode}); its output:\n${tail(log)}`;
      }
    }
    return null;
  }

  /** Waits (bounded) for `ready`; fails with what the daemons said if they die or time runs out. */
  async waitFor(what: string, seconds: number, ready: () => boolean): Promise<void> {
    const end = Date.now() + seconds * 1000;
    while (Date.now() < end) {
      if (ready()) return;
      const why = this.dead();
      if (why) throw new Error(`Slurm cannot start: ${why}`);
      await sleep(250);
    }
    const logs = this.children.map(({ name, log }) => `--- ${name}:\n${tail(log, 8)}`).join('\n');
    throw new Error(`Slurm: no ${what} within ${seconds} s; the daemons said:\n${logs}`);
  }

  run(name: (typeof CLIENTS)[number], args: string[]) {
    return spawnSync(binaries[name]!, args, { env: this.env, encoding: 'utf8', timeout: 20_000 });
  }

  /** Cancels our jobs (bounded), then stops each daemon by its PID: TERM, then KILL after 5 s. */
  async stop(): Promise<void> {
    if (this.jobs.length > 0 && this.dead() === null) {
      this.run('scancel', this.jobs);
      const end = Date.now() + 15_000;
      while (Date.now() < end && this.run('squeue', ['-h', '-j', this.jobs.join(',')]).stdout.trim() !== '') await sleep(250);
    }
    for (const { child } of [...this.children].reverse()) {
      if (child.pid === undefined || child.exitCode !== null || child.signalCode !== null) continue;
      const ended = new Promise<void>((r) => child.once('exit', () => r()));
      process.kill(child.pid, 'SIGTERM');
      const timer = setTimeout(() => {
        if (child.exitCode === null && child.signalCode === null) process.kill(child.pid!, 'SIGKILL');
      }, 5000);
      await ended;
      clearTimeout(timer);
    }
  }
}

describe('a sweep on a real Slurm cluster of one node (127.0.0.1)', () => {
  if (!required) it.skip(`skipped: ${missing.join(', ')} not installed; install the Debian packages munge slurmctld slurmd slurm-client to run it (CI does)`, () => {});

  it.runIf(required)('a 3-task job array of --shard auto and an afterok merge give the local sweep.csv byte for byte', async () => {
    if (missing.length > 0) {
      throw new Error(`Slurm cannot start: ${missing.join(', ')} not found on PATH or in /usr/sbin (install the packages munge slurmctld slurmd slurm-client; .ci/run does)`);
    }
    const dir = tempDir('edgewise-slurm-');
    const cluster = new Cluster(dir);
    try {
      // munge: a key of our own and a socket in the folder (munged checks the key is 0600).
      const key = join(dir, 'munge.key');
      writeFileSync(key, randomBytes(1024), { mode: 0o600 });
      const socket = join(dir, 'munge.socket');
      cluster.start('munged', ['--foreground', '--force', `--key-file=${key}`, `--socket=${socket}`,
        `--pid-file=${join(dir, 'munged.pid')}`, `--log-file=${join(dir, 'munged.log')}`, `--seed-file=${join(dir, 'munged.seed')}`]);
      await cluster.waitFor('munge socket', START_SECONDS, () => existsSync(socket));

      const host = hostname().split('.')[0];
      const [controllerPort, nodePort] = [await freePort(), await freePort()];
      const user = userInfo().username;
      writeFileSync(cluster.conf, [
        'ClusterName=edgewisetest',
        `SlurmctldHost=${host}(127.0.0.1)`,
        `SlurmctldPort=${controllerPort}`,
        `SlurmdPort=${nodePort}`,
        'AuthType=auth/munge',
        'CredType=cred/munge',
        `AuthInfo=socket=${socket}`,
        `SlurmUser=${user}`,
        `SlurmdUser=${user}`,
        `StateSaveLocation=${join(dir, 'state')}`,
        `SlurmdSpoolDir=${join(dir, 'spool')}`,
        `SlurmctldPidFile=${join(dir, 'slurmctld.pid')}`,
        `SlurmdPidFile=${join(dir, 'slurmd.pid')}`,
        `SlurmctldLogFile=${join(dir, 'slurmctld.log')}`,
        `SlurmdLogFile=${join(dir, 'slurmd.log')}`,
        'ProctrackType=proctrack/linuxproc',
        'TaskPlugin=task/none',
        'SelectType=select/cons_tres',
        'SelectTypeParameters=CR_CPU',
        'MpiDefault=none',
        'JobAcctGatherType=jobacct_gather/none',
        'AccountingStorageType=accounting_storage/none',
        'ReturnToService=2',
        'MailProg=/bin/true',
        // The node as configured here, whatever the machine's sockets and cores.
        'SlurmdParameters=config_overrides',
        `NodeName=${host} NodeAddr=127.0.0.1 CPUs=2 RealMemory=${Math.floor(totalmem() / 2 ** 20 / 2)} State=UNKNOWN`,
        `PartitionName=edgewise Nodes=${host} Default=YES MaxTime=INFINITE State=UP`,
        '',
      ].join('\n'));
      cluster.start('slurmctld', ['-D', '-f', cluster.conf]);
      await cluster.waitFor('answer from slurmctld', START_SECONDS, () => cluster.run('scontrol', ['ping']).stdout.includes('is UP'));
      cluster.start('slurmd', ['-D', '-f', cluster.conf, '-N', host]);
      await cluster.waitFor('idle node', START_SECONDS, () => /^idle/.test(cluster.run('sinfo', ['-h', '-N', '-o', '%t']).stdout.trim()));

      const recipePath = join(dir, 'recipe.json');
      writeFileSync(recipePath, JSON.stringify(recipe, null, 2));
      const local = join(dir, 'local');
      const onCluster = join(dir, 'cluster');
      const l = edgewise(['sweep', recipePath, '--out', local, '--error-solves', '1', '--quiet']);
      expect(l.code, l.stderr).toBe(0);

      // The script the plan prints, run as a user would run it.
      const plan = edgewise(['sweep', recipePath, '--out', onCluster, '--error-solves', '1', '--plan', '--shards', '3', '--scheduler', 'slurm']);
      expect(plan.code, plan.stderr).toBe(0);
      const script = join(dir, 'submit.sh');
      writeFileSync(script, plan.stdout);
      const submitted = spawnSync('bash', [script], { env: cluster.env, encoding: 'utf8', timeout: 60_000 });
      expect(submitted.status, `${submitted.stdout}${submitted.stderr}`).toBe(0);
      const ids = /submitted job array (\d+) \(3 tasks\) and merge job (\d+)/.exec(submitted.stdout);
      expect(ids, submitted.stdout).not.toBeNull();
      const [arrayJob, mergeJob] = [ids![1], ids![2]];
      cluster.jobs.push(arrayJob, mergeJob);

      let state = '';
      await cluster.waitFor(`end of merge job ${mergeJob}`, JOB_SECONDS, () => {
        const show = cluster.run('scontrol', ['show', 'job', '-o', mergeJob]).stdout;
        state = /JobState=(\S+)/.exec(show)?.[1] ?? '';
        const reason = /Reason=(\S+)/.exec(show)?.[1] ?? '';
        return ['COMPLETED', 'FAILED', 'CANCELLED', 'TIMEOUT', 'NODE_FAIL', 'OUT_OF_MEMORY'].includes(state) || reason === 'DependencyNeverSatisfied';
      });
      const logs = existsSync(onCluster) ? readdirSync(onCluster).filter((n) => n.startsWith('slurm-')).sort() : [];
      const said = logs.map((n) => `--- ${n}:\n${tail(join(onCluster, n), 5)}`).join('\n');
      expect(state, `merge job ${state}; the job logs:\n${said}`).toBe('COMPLETED');
      // Three task logs (array job %A, tasks %a = 1, 2, 3) and one of the merge.
      expect(logs).toEqual([1, 2, 3].map((k) => `slurm-${arrayJob}_${k}.log`).concat(`slurm-merge-${mergeJob}.log`));
      expect(readFileSync(join(onCluster, `slurm-merge-${mergeJob}.log`), 'utf8')).toMatch(/^merged 3 shards: 6 runs, 6 ok, 0 not ok; wrote /);
      for (let k = 1; k <= 3; k++) expect(existsSync(join(onCluster, `sweep-shard-${k}-of-3.json`))).toBe(true);

      const merged = readFileSync(join(onCluster, 'sweep.csv'), 'utf8');
      expect(merged.split('\n').filter((line) => line !== '')).toHaveLength(7);
      expect(withoutTiming(merged)).toBe(withoutTiming(readFileSync(join(local, 'sweep.csv'), 'utf8')));
    } finally {
      await cluster.stop();
      rmSync(dir, { recursive: true, force: true });
    }
  }, 240_000);
});
