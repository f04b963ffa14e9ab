import type { InputHTMLAttributes } from 'vue';

/**
 * `data-test` for the native <input>/<textarea> inside an n-input
 * (`:input-props="testInput('signin-email')"`), so end-to-end tests can fill it.
 */
export function testInput(name: string): InputHTMLAttributes {
  return { 'data-test': name } as InputHTMLAttributes;
}
