// Progress on stderr: a bar (cli-progress) when stderr is a terminal and animation is allowed, else
// one plain line per file when it is done — nothing that fills a cron mail with carriage returns.
import cliProgress from 'cli-progress';
import { formatBytes, type Ui } from './output';

export interface Progress {
	/** Bytes sent so far (restarts at 0 on a retry). */
	sent(bytes: number): void;
	/** Rows the hub has checked so far. */
	rows(n: number): void;
	/** Ends the bar; the line is printed (on stderr, unless --quiet) either way. */
	done(line: string | null): void;
}

export function fileProgress(ui: Ui, label: string, totalBytes: number): Progress {
	if (!ui.animate) {
		return {
			sent: () => {},
			rows: () => {},
			done: (line) => {
				if (line) ui.info(line);
			}
		};
	}
	const bar = new cliProgress.SingleBar(
		{
			stream: ui.io.stderr,
			format: (options, params, payload: { label: string; phase: string; detail: string }) => {
				if (payload.phase === 'checking') return `${payload.label}  checking… ${payload.detail}`;
				const width = options.barsize ?? 30;
				const filled = Math.round(params.progress * width);
				return `${payload.label}  [${'█'.repeat(filled)}${'░'.repeat(width - filled)}] ${Math.floor(params.progress * 100)}%  ${payload.detail}`;
			},
			barsize: 30,
			hideCursor: true,
			clearOnComplete: true,
			fps: 10
		},
		cliProgress.Presets.shades_classic
	);
	const total = Math.max(1, totalBytes);
	bar.start(total, 0, { label, phase: 'sending', detail: `0 B / ${formatBytes(totalBytes)}` });
	let stopped = false;
	return {
		sent(bytes) {
			bar.update(Math.min(bytes, total), { phase: 'sending', detail: `${formatBytes(bytes)} / ${formatBytes(totalBytes)}` });
		},
		rows(n) {
			bar.update(total, { phase: 'checking', detail: `${n.toLocaleString('en-US')} rows` });
		},
		done(line) {
			if (!stopped) {
				stopped = true;
				bar.stop();
			}
			if (line) ui.info(line);
		}
	};
}
