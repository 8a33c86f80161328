/** Sends a cycle log with upload progress (fetch cannot report upload progress; XMLHttpRequest can). */
export function sendLog(url: string, body: FormData, onProgress: (fraction: number) => void): Promise<{ status: number; body: unknown }> {
	return new Promise((resolve, reject) => {
		const xhr = new XMLHttpRequest();
		xhr.open('POST', url);
		xhr.responseType = 'json';
		xhr.upload.onprogress = (e) => {
			if (e.lengthComputable) onProgress(e.loaded / e.total);
		};
		xhr.onload = () => resolve({ status: xhr.status, body: xhr.response });
		xhr.onerror = () => reject(new Error('network'));
		xhr.send(body);
	});
}
