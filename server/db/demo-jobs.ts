// The demo bakery's jobs and breakdowns (DESIGN.md §10). Written for Fourfold's demo; every word
// is invented for it. Each element gets a fresh id at seeding, and a later version reuses the ids
// of the elements it keeps, as a real revision would.
import type { BreakdownContent } from '../../shared/schemas/breakdown'
import type { HazardCategory, KeyPointKind } from '../../shared/types/breakdown'

type K = [KeyPointKind, string, string]
type S = [string, K[]]
interface DemoUnit { title: string, steps: S[] }

export interface DemoJob {
  title: string
  workArea: string
  purpose: string
  hazards: Array<{ category: HazardCategory, description: string }>
  ppe: string[]
  toolsAndMaterials: string[]
  workplaceArrangement: string
  coverageTarget: number
  versions: Array<{ changeNote: string, units: DemoUnit[] }>
}

// Slicer v1; v2 rewords the lockout step and adds the tension check after two loose sets.
const SLICER_V1_STEPS: S[] = [
  ['Stop and lock out slicer', [
    ['safety', 'Isolator off, your own padlock and tag on it', 'Nobody can start the drive while your hands are inside'],
    ['safety', 'Wait until the blade frame stands still', 'Blades coast after the stop button'],
  ]],
  ['Open the blade guard', [
    ['knack', 'Lift both latches together', 'One latch alone jams the guard'],
  ]],
  ['Remove the worn blade set', [
    ['safety', 'Gloves on, hold the set only by its frame bars', 'Blade edges cut through ordinary gloves'],
    ['quality', 'Put it straight into the empty blade case', 'A loose set gets damaged and is a hazard to others'],
  ]],
  ['Fit the new blade set', [
    ['quality', 'Seat both frame pins fully', 'A half-seated set tears the loaves'],
    ['knack', 'Rock the frame gently onto the pins', 'Forcing it bends the blades'],
  ]],
  ['Close guard, remove lock', [
    ['safety', 'Check the guard latch clicks before removing your lock', 'The slicer will not run safely with the guard open'],
  ]],
  ['Slice one test loaf', [
    ['quality', 'Slices even and crumb not torn', 'Shows the set is seated and sharp'],
  ]],
]

export const DEMO_JOBS: DemoJob[] = [
  {
    title: 'Change the slicer blade set',
    workArea: 'Slicing and bagging',
    purpose: 'Fit a sharp blade set to bread slicer 2 so loaves slice cleanly without tearing.',
    hazards: [
      { category: 'moving-parts', description: 'Blade frame keeps moving for a while after the stop button; drive can restart.' },
      { category: 'sharp-edges', description: 'Reciprocating blades are razor sharp on both edges.' },
    ],
    ppe: ['Cut-resistant gloves (level F)', 'Safety glasses'],
    toolsAndMaterials: ['New blade set in its carry case', 'Blade case for the worn set', '5 mm hex key', 'Personal padlock and tag', 'Food-safe wipe'],
    workplaceArrangement: 'Slicer 2 emptied of bread, infeed belt clear, blade trolley parked on the left of the machine.',
    coverageTarget: 3,
    versions: [
      { changeNote: 'First version.', units: [{ title: '', steps: SLICER_V1_STEPS }] },
      {
        changeNote: 'Added the hex-key tension check after two loose sets on night shift; reworded the lockout step.',
        units: [{
          title: '',
          steps: [
            ['Stop slicer and lock out', SLICER_V1_STEPS[0]![1]],
            ...SLICER_V1_STEPS.slice(1, 4),
            ['Tighten the tension bolts', [
              ['quality', 'Quarter turn past finger tight with the hex key', 'Loose blades wander; too tight snaps them'],
            ]],
            ...SLICER_V1_STEPS.slice(4),
          ],
        }],
      },
    ],
  },
  {
    title: 'Thread film on the bag sealer',
    workArea: 'Slicing and bagging',
    purpose: 'Load a new roll of bag film so the sealer forms and seals bags without wrinkles.',
    hazards: [
      { category: 'heat', description: 'Sealing jaws run at about 180 °C and stay hot after stopping.' },
      { category: 'moving-parts', description: 'Film draw rollers can trap fingers.' },
    ],
    ppe: ['Heat-resistant gloves for the jaw area'],
    toolsAndMaterials: ['Film roll, printed side checked', 'Splicing tape', 'Threading diagram on the machine door'],
    workplaceArrangement: 'Sealer in setup mode, jaws parked open, new roll on the trolley at shaft height.',
    coverageTarget: 2,
    versions: [{
      changeNote: 'First version.',
      units: [{
        title: '',
        steps: [
          ['Put sealer in setup mode', [
            ['safety', 'Jaws parked open and draw rollers stopped', 'Setup mode keeps your hands clear of moving and hot parts'],
          ]],
          ['Load the roll on its shaft', [
            ['quality', 'Printed side facing out, unwinding from the top', 'The print ends up inside the bag otherwise'],
            ['knack', 'Roll the reel onto the shaft from the trolley', 'Lifting it wastes effort and dents the edge'],
          ]],
          ['Thread film through the rollers', [
            ['quality', 'Follow the diagram on the door, roller by roller', 'One missed roller makes the film drift'],
            ['safety', 'Never reach past the jaw guard', 'The jaws are still hot'],
          ]],
          ['Splice to the old film', [
            ['knack', 'Tape across the full width, no wrinkle', 'A wrinkled splice snaps in the former'],
          ]],
          ['Run three test bags', [
            ['quality', 'Seal is flat and the print is centred', 'Proves the film tracks straight'],
          ]],
        ],
      }],
    }],
  },
  {
    title: 'Check-weigh a tray',
    workArea: 'Bake line',
    purpose: 'Check that a tray of rolls from the divider meets the target weight before baking.',
    hazards: [],
    ppe: [],
    toolsAndMaterials: ['Check-weigher at station 4', 'Weight record sheet or tablet', 'Calibration weight (1 kg)'],
    workplaceArrangement: 'Scale clean and level, record sheet for the shift on the clipboard.',
    coverageTarget: 4,
    versions: [{
      changeNote: 'First version.',
      units: [{
        title: '',
        steps: [
          ['Check the scale zero', [
            ['quality', 'Empty pan reads 0 g; place the 1 kg weight and read 1000 g', 'A drifting scale makes every reading wrong'],
          ]],
          ['Weigh ten rolls together', [
            ['knack', 'Take them from across the tray, not one row', 'One row can be heavier than the rest'],
          ]],
          ['Compare with the target band', [
            ['quality', 'Divide by ten; within ±3 g of the recipe weight', 'Outside the band means the divider needs adjusting'],
          ]],
          ['Record the result', [
            ['quality', 'Time, tray, weight and your initials', 'The record shows the line was checked'],
          ]],
        ],
      }],
    }],
  },
  {
    title: 'Grease the mixer gearbox',
    workArea: 'Maintenance',
    purpose: 'Lubricate the spiral mixer gearbox on the monthly schedule so it runs cool and quiet.',
    hazards: [
      { category: 'electrical', description: 'Mixer is fed at 400 V; the control cabinet is beside the access panel.' },
      { category: 'moving-parts', description: 'Bowl and spiral can turn if the drive is not isolated.' },
      { category: 'chemicals', description: 'Food-grade gearbox grease; avoid skin contact and keep it away from the bowl.' },
    ],
    ppe: ['Nitrile gloves', 'Safety glasses'],
    toolsAndMaterials: ['Grease gun with food-grade grease (H1)', 'Lint-free cloths', 'Personal padlock and tag', 'Maintenance log'],
    workplaceArrangement: 'Mixer empty and cleaned, bowl lowered, drip tray under the gearbox.',
    coverageTarget: 2,
    versions: [{
      changeNote: 'First version, in two units: making safe, then greasing.',
      units: [
        {
          title: 'Make the mixer safe',
          steps: [
            ['Stop the mixer', [
              ['safety', 'Bowl and spiral completely still', 'The drive coasts after stopping'],
            ]],
            ['Isolate and lock out', [
              ['safety', 'Main isolator off, your padlock and tag on', 'Someone at the panel cannot start it while you work'],
              ['safety', 'Press start to prove it is dead', 'Proves the right isolator is off'],
            ]],
            ['Open the gearbox panel', [
              ['knack', 'Loosen all four screws before removing any', 'The panel twists and strips a thread otherwise'],
            ]],
          ],
        },
        {
          title: 'Grease and restore',
          steps: [
            ['Clean the grease nipples', [
              ['quality', 'Wipe each nipple before connecting the gun', 'Dirt pushed in wears the gears'],
            ]],
            ['Grease each nipple', [
              ['quality', 'Three strokes per nipple, no more', 'Too much grease overheats the seals'],
              ['knack', 'Hold the coupler square until the stroke ends', 'An angled coupler leaks grease on the outside'],
            ]],
            ['Wipe away excess grease', [
              ['safety', 'Gloves on; keep cloths out of the bowl area', 'Grease must not reach the dough contact surfaces'],
            ]],
            ['Close panel, remove lock', [
              ['safety', 'All tools counted out before removing your lock', 'A tool left inside can be thrown out when the bowl turns'],
            ]],
            ['Log the greasing', [
              ['quality', 'Date, nipples done and grease used', 'The schedule relies on the log'],
            ]],
          ],
        },
      ],
    }],
  },
]

/** Turns the compact demo text into breakdown content, reusing ids for unchanged texts of the previous version. */
export function demoContent(units: DemoUnit[], newId: () => string, previous?: BreakdownContent): BreakdownContent {
  const previousSteps = new Map((previous?.units ?? []).flatMap(u => u.steps).map(s => [s.keyPoints.map(k => k.text).join('|'), s]))
  const previousUnits = new Map((previous?.units ?? []).map(u => [u.title, u]))
  return {
    units: units.map(unit => ({
      id: previousUnits.get(unit.title)?.id ?? newId(),
      title: unit.title,
      steps: unit.steps.map(([text, keyPoints]) => {
        // A step that keeps its key points keeps its lineage, even when reworded.
        const before = previousSteps.get(keyPoints.map(k => k[1]).join('|'))
        return {
          id: before?.id ?? newId(),
          text,
          photoId: null,
          keyPoints: keyPoints.map(([kind, kpText, reason]) => ({
            id: before?.keyPoints.find(k => k.text === kpText)?.id ?? newId(),
            kind,
            text: kpText,
            reason,
            photoId: null,
          })),
        }
      }),
    })),
  }
}
