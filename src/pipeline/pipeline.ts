/**
 * A pipeline file, validated: the ordered stages with their options
 * defaulted, and the feature templates configured. Nothing here reads data;
 * an invalid pipeline fails before any input is opened, naming the block and
 * listing the valid choices.
 */
import { UsageError } from '../core/errors.js';
import type { ScoringOptions } from '../core/parseval.js';
import { checkOptions } from '../features/options.js';
import { TEMPLATES } from '../features/registry.js';
import type { ConfigureContext, ConfiguredTemplate } from '../features/template.js';
import type { EncodeOptions } from '../stages/encode-shard.js';
import type { HashingOptions } from '../stages/hash-features.js';
import type { ParseOptions } from '../stages/parse-candidates.js';
import type { ShardLimits } from '../stages/write-shards.js';
import { STAGES } from './stages.js';
import type { PipelineConfig, TemplateBlock } from '../records.js';
import { show } from '../core/show.js';


/**
 * Stages of earlier sheaf versions and what replaced them: a pipeline file, a
 * shard manifest or a model naming one gets told what to do, not only that
 * the name is unknown.
 */
const REPLACED_STAGES: Record<string, { by: string; why: string }> = {
  'encode-shard.v1': { by: 'encode-shard.v3', why: 'shard format 3' },
  'encode-shard.v2': { by: 'encode-shard.v3', why: 'shard format 3: buckets stored once per sentence, positions as gaps' },
  'hash-features.v1': { by: 'hash-features.v2', why: 'its option `pseudoConstant` is now `dropUniform`' },
};

export const PIPELINE_FORMAT = 'sheaf-pipeline/1';

export type { PipelineConfig, TemplateBlock } from '../records.js';

export interface Pipeline {
  config: PipelineConfig;
  templates: ConfiguredTemplate[];
  maxCandidates: number;
  parse: ParseOptions;
  scoring: ScoringOptions;
  hashing: HashingOptions;
  encode: EncodeOptions;
  shards: ShardLimits;
}

const list = (xs: Iterable<string>) => [...xs].map((x) => `\`${x}\``).join(', ');

function isObject(v: unknown): v is Record<string, unknown> {
  return v !== null && typeof v === 'object' && !Array.isArray(v);
}

/** Validates a parsed pipeline file. `name` names it in messages. */
export function buildPipeline(raw: unknown, name: string, context: ConfigureContext): Pipeline {
  if (!isObject(raw)) throw new UsageError(`${name}: expected a JSON object with \`format\` and \`stages\``);
  for (const key of Object.keys(raw)) {
    if (!['format', 'description', 'stages'].includes(key)) {
      throw new UsageError(`${name}: unknown key \`${key}\`; expected one of: \`format\`, \`description\`, \`stages\``);
    }
  }
  if (raw.format !== PIPELINE_FORMAT) {
    throw new UsageError(`${name}: expected \`format\` to be \`${PIPELINE_FORMAT}\`, got \`${show(raw.format)}\``);
  }
  if (!Array.isArray(raw.stages) || raw.stages.length === 0) throw new UsageError(`${name}: expected \`stages\` to be a non-empty list of stage blocks`);
  const byId = new Map(STAGES.map((s) => [s.id, s]));
  const stages: PipelineConfig['stages'] = [];
  const provided = new Set<string>();
  let templates: TemplateBlock[] = [];
  let lastIndex = -1;
  raw.stages.forEach((block: unknown, k: number) => {
    const where = `${name}: stages[${k}]`;
    if (!isObject(block) || typeof block.stage !== 'string') throw new UsageError(`${where}: expected an object with a \`stage\` name; valid stages: ${list(byId.keys())}`);
    const spec = byId.get(block.stage);
    if (!spec) {
      const now = REPLACED_STAGES[block.stage];
      if (now) {
        throw new UsageError(
          `${where}: stage \`${block.stage}\` was replaced by \`${now.by}\` (${now.why}): write \`${now.by}\` in a pipeline file; ` +
            `shards and models made with \`${block.stage}\` must be made again (\`sheaf prepare\`, then \`sheaf train\`)`,
        );
      }
      throw new UsageError(`${where}: unknown stage \`${block.stage}\`; valid stages: ${list(byId.keys())}`);
    }
    const index = STAGES.indexOf(spec);
    if (index <= lastIndex) throw new UsageError(`${where}: stage \`${spec.id}\` is out of order or repeated; the order is: ${list(STAGES.map((s) => s.id))}`);
    lastIndex = index;
    for (const need of spec.needs) {
      if (!provided.has(need)) {
        const by = STAGES.find((s) => s.adds.includes(need));
        throw new UsageError(`${where}: stage \`${spec.id}\` needs the record field \`${need}\`, which no earlier stage adds (add \`${by?.id}\` before it)`);
      }
    }
    const options = checkOptions(block, spec.options, `${where} (${spec.id})`, ['stage', ...(spec.id === 'extract-features.v1' ? ['templates'] : [])]);
    if (spec.id === 'extract-features.v1') templates = checkTemplates(block.templates, `${where} (${spec.id})`);
    for (const a of spec.adds) provided.add(a);
    stages.push({ stage: spec.id, options });
  });
  const missing = STAGES.filter((s) => !stages.some((b) => b.stage === s.id));
  if (missing.length > 0) throw new UsageError(`${name}: missing stage(s) ${list(missing.map((s) => s.id))}; a prepare pipeline lists all of: ${list(STAGES.map((s) => s.id))}`);
  const opt = (id: string) => stages.find((s) => s.stage === id)!.options;
  const configured = templates.map((b) => TEMPLATES.get(b.template)!.configure(b.options, context));
  const scoring = opt('score-candidates.v1');
  const hashing = opt('hash-features.v2');
  const encode = opt('encode-shard.v3');
  return {
    config: { format: PIPELINE_FORMAT, stages, templates },
    templates: configured,
    maxCandidates: opt('read-nbest.v1').maxCandidates as number,
    parse: {
      stripFunctionTags: opt('parse-candidates.v1').stripFunctionTags as boolean,
      dropEmpty: opt('parse-candidates.v1').dropEmpty as boolean,
    },
    scoring: {
      punctuation: scoring.punctuation as string[],
      equivalent: scoring.equivalent as string[][],
      rootLabels: scoring.rootLabels as string[],
      labeled: scoring.labeled as boolean,
    },
    hashing: {
      bits: hashing.bits as number,
      seed: hashing.seed as number,
      dropUniform: hashing.dropUniform as boolean,
      names: hashing.names as number,
    },
    encode: {
      compression: encode.compression as EncodeOptions['compression'],
      level: encode.level as number,
    },
    shards: {
      sentencesPerShard: opt('write-shards.v1').sentencesPerShard as number,
      bytesPerShard: opt('write-shards.v1').bytesPerShard as number,
    },
  };
}

function checkTemplates(raw: unknown, where: string): TemplateBlock[] {
  if (!Array.isArray(raw) || raw.length === 0) {
    throw new UsageError(`${where}: expected \`templates\` to be a non-empty list of {"template": ...} blocks; valid templates: ${list(TEMPLATES.keys())}`);
  }
  const seen = new Set<string>();
  return raw.map((b: unknown, k: number) => {
    const at = `${where} templates[${k}]`;
    if (!isObject(b) || typeof b.template !== 'string') throw new UsageError(`${at}: expected an object with a \`template\` name; valid templates: ${list(TEMPLATES.keys())}`);
    const tpl = TEMPLATES.get(b.template);
    if (!tpl) throw new UsageError(`${at}: unknown template \`${b.template}\`; valid templates: ${list(TEMPLATES.keys())}`);
    if (seen.has(tpl.id)) throw new UsageError(`${at}: template \`${tpl.id}\` is listed twice`);
    seen.add(tpl.id);
    return { template: tpl.id, options: checkOptions(b, tpl.options, `${at} (${tpl.id})`, ['template']) };
  });
}

/**
 * The pipeline file that a resolved config stands for (every option written
 * out), so a worker can rebuild the same pipeline from the config alone.
 */
export function configAsFile(config: PipelineConfig): Record<string, unknown> {
  return {
    format: config.format,
    stages: config.stages.map((s) => ({
      stage: s.stage,
      ...s.options,
      ...(s.stage === 'extract-features.v1' ? { templates: config.templates.map((t) => ({ template: t.template, ...t.options })) } : {}),
    })),
  };
}

const utf8 = new TextDecoder();

/** Rebuilds a validated pipeline from a resolved config and the bytes of the files it reads (workers get these, never paths). */
export function rebuildPipeline(config: PipelineConfig, files: Readonly<Record<string, Uint8Array>>): Pipeline {
  return buildPipeline(configAsFile(config), 'the pipeline config', {
    readText(path) {
      const b = Object.hasOwn(files, path) ? files[path] : undefined;
      if (!b) throw new UsageError(`the pipeline config reads \`${path}\`, which was not handed over with it`);
      return utf8.decode(b);
    },
  });
}
