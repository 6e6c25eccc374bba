import { table } from '../format.ts';
import type { SweepMatrix } from './matrix.ts';
import { inShard, SHARD_COUNT_VARIABLE } from './shard.ts';

/**
 * `edgewise sweep … --plan`: how the runs split into shards, and the files that run them on a
 * scheduler — a Slurm job array with a merge that waits for it, and a Kubernetes indexed job
 * with its merge job. Nothing here runs or writes anything; the text goes to stdout.
 */
export interface PlanRequest {
  matrix: SweepMatrix;
  shards: number;
  /** worker threads, and cores asked for, per task */
  jobs: number;
  /** the folder the commands run in, absolute */
  cwd: string;
  /** the command that starts edgewise: node and the launcher, absolute */
  launcher: readonly string[];
  /** the sweep's own arguments (recipe and options), paths absolute, without --out/--shard */
  sweepArgs: readonly string[];
  /** the sweep folder, absolute */
  out: string;
}

/** A word for the shell: as it is when it holds nothing the shell reads, else in single quotes. */
export function shellWord(word: string): string {
  return /^[A-Za-z0-9_\/.,:=+@%-]+$/.test(word) ? word : `'${word.replace(/'/g, `'\\''`)}'`;
}

function commandLine(words: readonly string[]): string {
  return words.map(shellWord).join(' ');
}

/** A JSON string is a YAML flow scalar, so every value in the manifest is written as one. */
const yamlText = (text: string) => JSON.stringify(text);

/** Name of the sweep's jobs: `edgewise-<8 hex digits of the sweep's hash>` (a DNS label, as Kubernetes needs). */
function jobName(request: PlanRequest, what: 'sweep' | 'merge'): string {
  return `edgewise-${what}-${request.matrix.sweepSha256.slice(0, 8)}`;
}

function taskCommand(request: PlanRequest, jobs: string): string {
  return `${commandLine([...request.launcher, 'sweep', ...request.sweepArgs, '--out', request.out])} --jobs ${jobs} --shard auto --resume --quiet`;
}

function mergeCommandLine(request: PlanRequest): string {
  return commandLine([...request.launcher, 'merge', request.out]);
}

/** Runs and mesh points (a measure of the work) of each shard. */
export function shardSizes(matrix: SweepMatrix, shards: number): { ids: number[]; meshPoints: number }[] {
  return Array.from({ length: shards }, (_, k) => {
    const mine = matrix.runs.filter((r) => inShard(r.id, { index: k + 1, count: shards }));
    return { ids: mine.map((r) => r.id), meshPoints: mine.reduce((n, r) => n + r.meshPoints, 0) };
  });
}

export function planSummary(request: PlanRequest): string {
  const { matrix, shards } = request;
  const product = matrix.parameters.map((p) => `${p.values.length} ${p.name}`).join(' × ');
  const sizes = shardSizes(matrix, shards);
  const rows = sizes.map((s, k) => [
    `${k + 1}/${shards}`, String(s.ids.length),
    s.ids.length === 0 ? '—' : `${s.ids.slice(0, 3).join(', ')}${s.ids.length > 3 ? ', …' : ''}`,
    s.meshPoints.toExponential(2),
  ]);
  const most = Math.max(...sizes.map((s) => s.meshPoints));
  const mean = sizes.reduce((n, s) => n + s.meshPoints, 0) / shards;
  const lines = [
    `plan: ${matrix.runs.length} run${matrix.runs.length === 1 ? '' : 's'}${product ? ` (${product})` : ''} in ${shards} shard${shards === 1 ? '' : 's'} of ${request.jobs} worker${request.jobs === 1 ? '' : 's'} each; ` +
      `the largest shard holds ${(most / mean).toFixed(2)}× the mean work (mesh points summed over its runs)`,
    table(['shard', 'runs', 'run ids', 'mesh points'], rows),
  ];
  if (shards > matrix.runs.length) lines.push(`plan: ${shards - matrix.runs.length} of the shards have no run; they write an empty slice`);
  return lines.join('\n');
}

/**
 * A bash script that submits the sweep as a Slurm job array (one task a shard, `--shard auto`)
 * and the merge as a job that starts once every task has ended ok (`afterok`).
 */
export function slurmScript(request: PlanRequest): string {
  const { shards, jobs, out } = request;
  return [
    '#!/bin/bash',
    `# Edgewise sweep: ${request.matrix.runs.length} runs as a Slurm job array of ${shards} tasks,`,
    '# then a merge that starts when every task has ended ok. Run this file with bash (it calls',
    '# sbatch twice); add your site\'s --partition, --time or --account to both sbatch lines.',
    '# A task that failed or was cut short: submit this file again; --resume keeps every finished run.',
    'set -euo pipefail',
    `cd ${shellWord(request.cwd)}`,
    `${commandLine(request.launcher)} --help > /dev/null   # builds the CLI once, before the tasks start`,
    `mkdir -p ${shellWord(out)}`,
    `sweep=$(sbatch --parsable --job-name=${jobName(request, 'sweep')} --array=1-${shards} --cpus-per-task=${jobs} --requeue \\`,
    `  --output=${shellWord(`${out}/slurm-%A_%a.log`)} <<'EOF'`,
    '#!/bin/bash',
    `exec ${taskCommand(request, '"$SLURM_CPUS_PER_TASK"')}`,
    'EOF',
    ')',
    `merge=$(sbatch --parsable --job-name=${jobName(request, 'merge')} --dependency=afterok:"\${sweep%%;*}" \\`,
    `  --output=${shellWord(`${out}/slurm-merge-%j.log`)} <<'EOF'`,
    '#!/bin/bash',
    `exec ${mergeCommandLine(request)}`,
    'EOF',
    ')',
    `echo "submitted job array \${sweep%%;*} (${shards} tasks) and merge job \${merge%%;*}; the merged table will be ${out}/sweep.csv"`,
    '',
  ].join('\n');
}

/**
 * Two Kubernetes Jobs: an indexed job of one pod a shard (JOB_COMPLETION_INDEX, with the count
 * in EDGEWISE_SHARD_COUNT) and the merge, labelled so that each is created on its own.
 */
export function indexedJobManifest(request: PlanRequest): string {
  const { shards, jobs, cwd } = request;
  const pod = (name: string, command: string, env: string[]) => [
    '  template:',
    '    spec:',
    '      restartPolicy: Never',
    '      containers:',
    `        - name: ${name}`,
    '          image: "node:20-bookworm-slim"',
    `          workingDir: ${yamlText(cwd)}`,
    `          command: ["/bin/sh", "-c", ${yamlText(command)}]`,
    ...env,
    `          resources: { requests: { cpu: "${jobs}" } }`,
    `          volumeMounts: [{ name: data, mountPath: ${yamlText(cwd)} }]`,
    '      volumes: [{ name: data, persistentVolumeClaim: { claimName: edgewise-data } }]',
  ];
  return [
    `# Edgewise sweep: ${request.matrix.runs.length} runs as a Kubernetes indexed job of ${shards} pods, then a merge job.`,
    `# The claim edgewise-data, mounted at ${cwd}, must hold Edgewise built there, the recipe`,
    `# and the output folder ${request.out} at the paths below; set the image to one with the same`,
    '# Node. Create the sweep, wait for it, then create the merge:',
    '#   kubectl create -f FILE -l edgewise/step=sweep',
    `#   kubectl wait --for=condition=complete --timeout=24h job/${jobName(request, 'sweep')}`,
    '#   kubectl create -f FILE -l edgewise/step=merge',
    'apiVersion: batch/v1',
    'kind: Job',
    'metadata:',
    `  name: ${jobName(request, 'sweep')}`,
    '  labels: { edgewise/step: sweep }',
    'spec:',
    '  completionMode: Indexed',
    `  completions: ${shards}`,
    `  parallelism: ${shards}`,
    `  backoffLimit: ${2 * shards}`,
    ...pod('sweep', taskCommand(request, String(jobs)), [
      `          env: [{ name: ${SHARD_COUNT_VARIABLE}, value: "${shards}" }]`,
    ]),
    '---',
    'apiVersion: batch/v1',
    'kind: Job',
    'metadata:',
    `  name: ${jobName(request, 'merge')}`,
    '  labels: { edgewise/step: merge }',
    'spec:',
    '  backoffLimit: 0',
    ...pod('merge', mergeCommandLine(request), []),
    '',
  ].join('\n');
}
