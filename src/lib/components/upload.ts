/**
 * Upload with progress: fetch() cannot report upload progress, XMLHttpRequest can.
 * Posts a FormData to `url` and resolves with the status and parsed body.
 */
export function uploadWithProgress(
	url: string,
	body: FormData,
	onProgress: (fraction: number) => void,
	headers: Record<string, string> = {}
): Promise<{ status: number; text: string }> {
	return new Promise((resolve, reject) => {
		const xhr = new XMLHttpRequest();
		xhr.open('POST', url);
		for (const [k, v] of Object.entries(headers)) xhr.setRequestHeader(k, v);
		xhr.upload.onprogress = (e) => {
			if (e.lengthComputable) onProgress(e.loaded / e.total);
		};
		xhr.onload = () => {
			onProgress(1);
			resolve({ status: xhr.status, text: xhr.responseText });
		};
		xhr.onerror = () => reject(new Error('The upload failed: check the connection and try again.'));
		xhr.send(body);
	});
}
