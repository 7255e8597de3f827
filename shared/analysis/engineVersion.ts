/**
 * The version of the measurement engine, stored with every analysis and printed by the CLI. Bump it whenever a change
 * can alter any number the engine produces, so stored results stay traceable to the code that made them.
 */
export const ENGINE_VERSION = '1.0.0'
