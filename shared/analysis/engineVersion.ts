/**
 * The version of the measurement engine, stored with every analysis and printed by the CLI. Bump it whenever a change
 * can alter any number the engine produces, so stored results stay traceable to the code that made them.
 * 1.1.0: the x_min scan of the jump-size power law no longer picks tails shorter than 50 values when longer exist.
 */
export const ENGINE_VERSION = '1.1.0'
