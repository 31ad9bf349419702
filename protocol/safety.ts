// The one safety line for mains pickup and ground loops: the dashboard's mains incident detail and tooltip, and
// `floorline run --help`, carry these words and no others.

export const MAINS_CAUTION =
  'Isolate the measurement path; never lift a protective earth to cure hum; defer to local electrical codes and qualified people.';
