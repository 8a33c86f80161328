/** A catalogue for a locale other than the base may leave out messages; English fills them in. */
export type DeepPartial<T> = T extends (...args: never[]) => unknown
	? T
	: T extends object
		? { [K in keyof T]?: DeepPartial<T[K]> }
		: T;
