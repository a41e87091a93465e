import { backgroundSchema, type Background } from '../../../shared/run-spec.js';
import { NPY_MAGIC } from '../npy/index.js';
import { CliInputError } from './errors.js';
import { parseCount, parseWeight } from './numbers.js';
import { heightsFromPng } from './png-background.js';
import { readInputFile } from './read-input.js';
import { heightsFromNpy, uploadHash, type UploadedArray } from './upload-array.js';
import { firstIssue } from './zod-message.js';

export interface ResolvedBackground {
  background: Background;
  /** present for file: backgrounds; handed to the engine beside the spec */
  upload?: UploadedArray;
  /** for PNG uploads: the grey level behind each height 0, 1, 2, … */
  pngLevels?: number[];
}

const PNG_MAGIC = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];

const pair = (flag: string, body: string): [number, number] => {
  const parts = body.split(',');
  if (parts.length !== 2) throw new CliInputError(`--background ${flag}: needs two heights A,B, got '${body}'`);
  return [parseCount(`--background ${flag} height`, parts[0]!), parseCount(`--background ${flag} height`, parts[1]!)];
};

/** Turn `--background KIND:ARGS` into a validated spec background (reading any named file). */
export async function resolveBackgroundArg(raw: string | undefined): Promise<ResolvedBackground> {
  if (raw === undefined) return { background: { kind: 'constant', height: 0 } };
  const colon = raw.indexOf(':');
  const kind = colon < 0 ? raw : raw.slice(0, colon);
  const body = colon < 0 ? '' : raw.slice(colon + 1);
  let resolved: ResolvedBackground;
  switch (kind) {
    case 'constant':
      resolved = { background: { kind, height: parseCount('--background constant height', body) } };
      break;
    case 'checkerboard': {
      const [a, b] = pair(kind, body);
      resolved = { background: { kind, a, b } };
      break;
    }
    case 'annuli': {
      const [a, b] = pair(kind, body);
      resolved = { background: { kind, a, b } };
      break;
    }
    case 'random': {
      const m = /^([^:]+):(.+)$/.exec(body);
      if (!m) throw new CliInputError(`--background random: needs SEED:P0,P1,..., got '${body}'`);
      const seed = parseCount('--background random seed', m[1]!);
      const weights = m[2]!.split(',').map((w) => parseWeight('--background random weight', w));
      if (!weights.some((w) => w > 0)) throw new CliInputError('--background random: at least one weight must be positive');
      resolved = { background: { kind, seed, weights } };
      break;
    }
    case 'motif': {
      const upload = heightsFromNpy(await readInputFile(body, 'motif'), `motif ${body}`);
      if (upload.shape.length !== 2) {
        throw new CliInputError(`motif ${body}: expected a 2-D array (rows = y, columns = x), got shape (${upload.shape.join(', ')})`);
      }
      const [rows, cols] = upload.shape as [number, number];
      const cells = Array.from({ length: rows }, (_, r) => Array.from(upload.data.subarray(r * cols, (r + 1) * cols)));
      resolved = { background: { kind, cells } };
      break;
    }
    case 'file': {
      if (body === '') throw new CliInputError('--background file: needs a path to a .npy or .png file');
      const bytes = await readInputFile(body, 'background');
      const label = `background ${body}`;
      let upload: UploadedArray;
      let pngLevels: number[] | undefined;
      if (PNG_MAGIC.every((b, k) => bytes[k] === b)) {
        const png = await heightsFromPng(bytes, label);
        upload = { shape: png.shape, data: png.data };
        pngLevels = png.levels;
      } else if (NPY_MAGIC.every((b, k) => bytes[k] === b) || /\.npy$/i.test(body)) {
        upload = heightsFromNpy(bytes, label);
      } else {
        throw new CliInputError(`${label}: neither a .npy array nor a PNG image`);
      }
      resolved = { background: { kind: 'array', sha256: uploadHash(upload), shape: upload.shape }, upload, ...(pngLevels ? { pngLevels } : {}) };
      break;
    }
    default:
      throw new CliInputError(`unknown background '${kind}'; use constant:H, checkerboard:A,B, motif:F.npy, random:SEED:P0,P1,..., annuli:A,B or file:F.npy|F.png`);
  }
  const checked = backgroundSchema.safeParse(resolved.background);
  if (!checked.success) throw new CliInputError(`--background ${raw}: ${firstIssue(checked.error)}`);
  return { ...resolved, background: checked.data };
}
