import type { SubmitFunction } from '@sveltejs/kit';

/**
 * The enhance callback of our forms: marks the form busy while the action runs, then applies the
 * result without clearing what the user typed (so values stay after a validation error).
 * Use: `use:enhance={busyWhileSubmitting((b) => (busy = b))}`.
 */
export function busyWhileSubmitting(setBusy: (busy: boolean) => void): SubmitFunction {
	return () => {
		setBusy(true);
		return async ({ update }) => {
			await update({ reset: false });
			setBusy(false);
		};
	};
}
