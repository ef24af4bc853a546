/**
 * Reading a form action's body. Every action calls `readForm` instead of `request.formData()`:
 *
 * - a body that is not a readable form (text/plain, which browsers can send; a malformed
 *   multipart body) is answered 415 or 400 with what to send, instead of a TypeError and a 500;
 * - file parts are refused unless the action says it takes them (`{ files: true }`), because a
 *   file part read as text would be stored as "[object File]"; an upload form states it here, so
 *   it cannot be refused by a rule kept elsewhere;
 * - a NUL character (U+0000) in a field's name or text is refused with the field named: no stored
 *   text holds one, and SQLite would end a statement's text at it.
 */
import { error, isHttpError } from '@sveltejs/kit';

export interface ReadFormOptions {
	/** The action accepts file parts (uploads, imports). */
	files?: boolean;
}

/** A field name as it may be shown in a message: control characters spelled out, at most 40 characters. */
export function shownFieldName(name: string): string {
	const spelled = name.replace(/[\u0000-\u001f\u007f]/g, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
	return spelled.length > 40 ? `${spelled.slice(0, 40)}…` : spelled || '(unnamed)';
}

/** The first field whose name or text holds a NUL character, or null. */
export function fieldWithNul(form: FormData): string | null {
	for (const [name, value] of form.entries()) {
		if (name.includes('\u0000')) return name;
		if (typeof value === 'string' ? value.includes('\u0000') : value.name.includes('\u0000')) return name;
	}
	return null;
}

export async function readForm(request: Request, options: ReadFormOptions = {}): Promise<FormData> {
	let form: FormData;
	try {
		form = await request.formData();
	} catch (e) {
		if (isHttpError(e) || !(e instanceof TypeError)) throw e;
		const type = (request.headers.get('content-type') ?? '').split(';')[0].trim().toLowerCase();
		if (type !== 'multipart/form-data' && type !== 'application/x-www-form-urlencoded')
			error(415, `Forms must be sent as multipart/form-data or application/x-www-form-urlencoded (got ${type.slice(0, 60) || 'no content type'}).`);
		error(400, 'The form data could not be read (malformed body); send the form again.');
	}
	if (!options.files) {
		const file = [...form.entries()].find(([, v]) => typeof v !== 'string');
		if (file) error(400, `The field “${shownFieldName(file[0])}” is a file, but this form takes no files; send its fields as text.`);
	}
	const nul = fieldWithNul(form);
	if (nul !== null) error(400, `The field “${shownFieldName(nul)}” contains a NUL character (U+0000), which no field accepts; remove it and send the form again.`);
	return form;
}
