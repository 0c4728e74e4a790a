/**
 * Safety notes for people who build a rig, worded once: the Rig tab's caution panel and the case report both show
 * exactly these lines.
 */
export const CAUTION_TITLE = 'Before you run the rig';

export const CAUTION_NOTES: readonly string[] = [
  'Guard the crank, the connecting rod and every coupling; a rotating part can catch clothing, hair and fingers.',
  'Clamp the rig and the shaker to the bench; an unbalanced drive walks across the table.',
  'Keep hands and faces out of the swept volume of the body and of anything it can reach when it falls.',
  'Wear eye protection: bobs, screws and broken rods leave at speed when the drive runs fast.',
  "Stay inside the shaker's rated force, stroke and velocity; hitting the end stops damages it and throws the load.",
  'Keep an emergency stop within reach and test it before each session.',
];

export const CAUTION_DEFERRAL =
  "These notes do not replace local codes, the machine makers' instructions or licensed practice; follow those first.";
