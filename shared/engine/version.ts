/** Version of the physics engine; every result carries it so numbers can be traced to the code that made them. */
export const ENGINE_VERSION = '1.0.0';
