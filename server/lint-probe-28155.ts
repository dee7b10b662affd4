export async function f(): Promise<void> {}
export function g() {
  f();
}
