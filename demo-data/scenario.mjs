// The words of the demo scenario: the help assistant of the Spoke & Chain Co-op, a member-run
// bicycle repair workshop. Every name, brand and bike model here is invented for the demo.

export const COOP = 'Spoke & Chain Co-op';
export const ASSISTANT = 'Cog';

export const MEMBERS = [
  'Amaru', 'Bettina', 'Cosmo', 'Dagny', 'Eamon', 'Farida', 'Gustav', 'Hollis', 'Ines', 'Jarrah',
  'Kofi', 'Liesel', 'Mateo', 'Nadia', 'Oskar', 'Priya', 'Quentin', 'Rosalind', 'Sefa', 'Tomasz',
  'Ulla', 'Valentin', 'Wren', 'Ximena', 'Yusuf', 'Zofia', 'Anouk', 'Bram', 'Cleo', 'Desmond',
  'Esme', 'Florin', 'Gwen', 'Hamid', 'Isolde', 'Joaquin', 'Kaia', 'Lorcan', 'Mireille', 'Niamh',
];

export const MECHANICS = ['Marguerite', 'Tobias', 'Adaeze', 'Signe', 'Ruairi'];

export const BIKES = [
  'Harrowgate City 8', 'Corvale Tourer 3', 'Brindle Gravel SX', 'Plover Commuter', 'Pellam Roadster',
  'Tamsin Trail 27', 'Kittiwake Folding 16', 'Larchmont Cargo Long', 'Fenwick Steel Randonneur',
  'Quarry Hill Hardtail', 'Sallowmere Step-Through', 'Dunlin Sport 2',
];

export const PADS = ['Corbel organic', 'Stillwater sintered', 'Fernlow semi-metallic'];
export const TYRES = ['Marlpit Allroad', 'Kestrelline Trail', 'Gannet Urban', 'Coldharbour Tour'];
export const TYRE_SIZES = ['700x32c', '700x38c', '700x28c', '29x2.2', '27.5x2.4', '26x1.95', '20x1.75'];
export const CHAINS = ['Linnet 9-speed', 'Linnet 10-speed', 'Halvard 11-speed', 'Halvard 8-speed'];
export const SEALANTS = ['Gullwing', 'Tarnmoss'];
export const MECHS = ['Wrenhaven 9-speed', 'Ossory 10-speed', 'Wrenhaven 11-speed'];
export const LIBRARY_TOOLS = [
  'truing stand', 'headset press', 'torque wrench', 'bottom bracket tool set', 'spoke tension meter',
  'mineral-oil bleed kit', 'tubeless inflator', 'chain whip and lockring tool', 'workstand',
  'wheel dishing gauge',
];
export const DAYS = ['Tuesday', 'Thursday', 'Saturday'];
export const SLOTS = ['17:30', '18:00', '18:30', '19:00', '19:30', '20:00'];
export const SAT_SLOTS = ['10:00', '10:30', '11:00', '12:30', '13:00', '14:30', '15:00'];

export const SYSTEM_PROMPTS = [
  `You are ${ASSISTANT}, the help assistant of the ${COOP}, a member-run bicycle repair workshop. Answer members' questions about repairs, the workshop and membership. Be practical and friendly, and suggest a mechanic's help when a job is safety-critical.`,
  `You answer questions for the ${COOP}. The open workshop runs Tuesday and Thursday 17:30-21:00 and Saturday 10:00-16:00. Dues are $48 a year, $20 concession. Members can borrow tools from the tool library for up to seven days.`,
  `You are the ${COOP} assistant. Keep answers short and step by step. If a repair involves brakes, steering or wheels and the member sounds unsure, recommend booking a bench with a volunteer mechanic.`,
  `Role: support assistant for a community bike workshop (${COOP}). Tone: warm, plain language, no jargon without explaining it. Never promise a booking you have not confirmed with a tool.`,
];

export const SOURCES = ['member-chat', 'email-digest', 'workshop-kiosk', 'phone-transcript'];
export const TEXT_SOURCES = ['newsletter', 'repair-guide', 'forum-post', 'workshop-notice'];
