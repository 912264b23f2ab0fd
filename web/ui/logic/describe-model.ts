// Plain-words descriptions of a user's network from its rimfill-model/1 description, for the
// network list and the result pages.
import type { ModelInfo, ModelInputInfo, ModelTensorInfo } from '../../core/model/description';
import { choiceLabel } from '../../core/recipe/fields';

const num = (v: number) => String(Number(v.toPrecision(6)));

/** "256 × 256 pixels of 1.5 mm", "256 × 256 pixels over the reconstruction's field" or "the reconstruction grid". */
export function modelGridSummary(input: ModelInputInfo): string {
  if (input.size === undefined) return 'the reconstruction grid';
  const n = `${input.size} × ${input.size} pixels`;
  return input.pixel === undefined ? `${n} over the reconstruction's field` : `${n} of ${num(input.pixel)} mm`;
}

/** How physical values become network values: "µ (1/mm) × 50 − 1", "HU × 0.001", "µ (1/mm) unchanged". */
export function normalizationSummary(t: ModelTensorInfo): string {
  const unit = t.quantity === 'hu' ? 'HU' : 'µ (1/mm)';
  if (t.scale === 1 && t.offset === 0) return `${unit} unchanged`;
  const scale = t.scale === 1 ? '' : ` × ${num(t.scale)}`;
  const offset = t.offset === 0 ? '' : ` ${t.offset < 0 ? '−' : '+'} ${num(Math.abs(t.offset))}`;
  return `${unit}${scale}${offset}`;
}

/** "FBP with water cylinder fit extension" / "FBP without truncation correction". */
export function inputSourceSummary(info: ModelInfo): string {
  const { method, extend } = info.input.from;
  const m = method === 'fbp' ? 'FBP' : choiceLabel(method);
  return extend === 'none' ? `${m} without truncation correction` : `${m} with truncation correction: ${choiceLabel(extend).toLowerCase()}`;
}
