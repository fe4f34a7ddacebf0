// The discrete model a check runs on: the model itself when it is given in z (sampleTime), or its
// zero-order-hold equivalent when it is continuous with `discretize` (discrete.ts), with the conversion's
// error bound for the result's numbers.
import { zohModel } from './discrete';
import { toTransferFunction } from './model';
import type { Model } from './schema';

const cache = new WeakMap<object, { model: Model; conversion: Record<string, number | string> | null }>();

export function discreteModel(model: Model): {
	model: Model;
	conversion: Record<string, number | string> | null;
} {
	const hit = cache.get(model);
	if (hit) return hit;
	let out: { model: Model; conversion: Record<string, number | string> | null };
	if (!model.discretize) out = { model, conversion: null };
	else {
		const z = zohModel(model, model.discretize.sampleTime, toTransferFunction);
		out = {
			model: z.model,
			conversion: {
				discretizedBy: 'zero-order hold',
				sampleTime: model.discretize.sampleTime,
				// The verdict is proved for the discrete model with these rounded matrices; each entry of Ad and Bd is
				// within this bound of the exact exponential of the model as entered.
				zohEntryErrorBound: z.errorBound,
				zohRealisationExact: z.realisationExact ? 'yes' : 'no (coefficients divided by the leading one)'
			}
		};
	}
	cache.set(model, out);
	return out;
}
