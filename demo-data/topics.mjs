// Question and answer templates of the demo chats. `s` holds the slots drawn for one chat
// (member name, bike, parts, times); each template reads it and returns plain text. Ask i is
// answered by answer i, or by one of `match[i]` where a topic has fewer answers than asks.

export const TOPICS = [
  {
    key: 'brake-pads',
    match: [[0], [0], [1], [2]],
    asks: [
      (s) => `My front brake on the ${s.bike} has started squealing and it doesn't bite like it used to. Do I need new pads?`,
      (s) => `Hi, ${s.name} here. How can I tell if my disc brake pads are worn out?`,
      (s) => `The brakes on my ${s.bike} feel grindy when I pull the lever. Is that the pads?`,
      (s) => `What brake pads would you recommend for commuting in the rain? I ride the ${s.bike} every day.`,
    ],
    answers: [
      (s) => `It sounds like the pads could be close to the end. Here's how to check:\n\n1. Take the wheel out and look into the caliper from above.\n2. If the pad material is thinner than about 1.5 mm (roughly the thickness of a coin's edge), replace them.\n3. While you're there, check the rotor for deep grooves or a blue tint from overheating.\n\nA squeal on its own is often contamination rather than wear. If the pads are thick but squeal, clean the rotor with isopropyl alcohol and lightly sand the pad faces. We stock ${s.pad} pads at the counter, and a volunteer can show you how to fit them at the open workshop.`,
      (s) => `Grinding usually means the pad material is gone and the metal backing plate is touching the rotor, so please stop riding it until it's sorted: braking distance goes up a lot and the rotor will get damaged.\n\nFitting new pads is a 15-minute job with a 2.5 mm hex key and a tyre lever to push the pistons back. If you'd like a hand, come to the open workshop on ${s.day} and ask for ${s.mechanic}; ${s.pad} pads are in stock.`,
      (s) => `For wet commuting, sintered pads last longer in grit and rain, while organic pads are quieter and bite better when cold. Many of our members on daily commutes use ${s.pad} pads and get two to three months out of a set in winter. Whichever you pick, bed them in: ten firm stops from jogging speed on a quiet street before your first real ride.`,
    ],
    followups: [
      [(s) => `Do I need to bed in new pads?`, (s) => `Yes. Ride up to a moderate speed and brake firmly to walking pace, about ten times, without locking the wheel. It lays an even layer of pad material on the rotor and you'll get full power afterwards.`],
      [(s) => `How much do the ${s.pad} pads cost?`, (s) => `They're $14 a pair for members and $18 for non-members. The counter takes cards and cash.`],
      [(s) => `Can I bring the bike in on ${s.day}?`, (s) => `Of course. The open workshop runs ${s.day === 'Saturday' ? '10:00 to 16:00' : '17:30 to 21:00'} that day. Benches go on a first-come basis unless you book one.`],
    ],
  },
  {
    key: 'disc-rub',
    match: [[0, 1], [0, 1], [0, 1]],
    asks: [
      (s) => `There's a rubbing noise from my rear disc brake every wheel turn. How do I stop it?`,
      (s) => `After I put my back wheel in, the rotor scrapes on one side. Any tips?`,
      (s) => `My ${s.bike}'s disc brake makes a "tsst tsst" sound once per revolution. What is that?`,
    ],
    answers: [
      (s) => `A once-per-turn rub usually means either the caliper is slightly out of line or the rotor has a small bend.\n\n- First, loosen the two caliper mounting bolts, squeeze the brake lever and hold it, then tighten the bolts again. That centres the caliper over the rotor.\n- If it still rubs at one spot, spin the wheel and watch the gap: a bent rotor can be straightened carefully with a rotor truing fork.\n- Make sure the wheel is fully seated in the dropouts before you tighten the axle.\n\nThe rotor truing fork is in the tool library if you'd like to borrow it.`,
      (s) => `Nine times out of ten that's the wheel not sitting square in the frame. Undo the thru-axle or quick release, let the bike's weight settle the wheel, and tighten it again. If the scrape is still there, re-centre the caliper: loosen both bolts, hold the brake on, re-tighten. If it's a bent rotor, ${s.mechanic} can show you how to true it at the open workshop.`,
    ],
    followups: [
      [(s) => `I tried that and it's still rubbing a little at one point.`, (s) => `Then the rotor is probably a touch bent. Find the spot that touches, and use a rotor truing fork (or a clean adjustable spanner) to bend it back a millimetre at a time. Go gently; it takes less force than you'd think.`],
      [(s) => `Is it safe to ride like that for now?`, (s) => `A light rub is noisy but not dangerous, as long as the brake still stops you firmly. If the lever feels soft or the pads are very thin, don't ride it until it's looked at.`],
    ],
  },
  {
    key: 'tubeless',
    match: [[0], [0], [1], [2]],
    asks: [
      (s) => `I want to set up my ${s.tyre} tyres tubeless. What do I need?`,
      (s) => `Is it worth going tubeless on a ${s.bike}? And can the co-op help me do it?`,
      (s) => `My tubeless tyre won't seat, it just hisses air out the sides. What am I doing wrong?`,
      (s) => `How much sealant should I put in a ${s.size} tubeless tyre?`,
    ],
    answers: [
      (s) => `For a tubeless setup you need:\n\n1. Tubeless-ready rims and tyres (check for "TLR" or "tubeless ready" on both).\n2. Rim tape that seals the spoke holes, one or two wraps.\n3. Tubeless valves.\n4. Sealant: about 60-90 ml per tyre for most road and gravel sizes.\n5. A way to get a burst of air in: a tubeless inflator or a track pump with a charger tank.\n\nWe sell ${s.sealant} sealant and tubeless tape at the counter, and the tubeless inflator is in the tool library.`,
      (s) => `Hissing at the bead means the tyre isn't sealing against the rim yet. A few things that help:\n\n- Soapy water around both beads makes them slide into place.\n- Push the beads into the centre channel of the rim opposite the valve to give yourself slack.\n- Remove the valve core and use a charger tank or inflator for a big burst of air.\n- Once it pops into place, put the core back, add sealant through the valve, and shake the wheel so the sealant coats the bead.\n\nIf it still won't seat, the rim tape may have a gap; ${s.mechanic} is good at tubeless setups and is usually in on ${s.day}s.`,
      (s) => `For a ${s.size} tyre, start with around ${s.size.startsWith('7') ? '50-70' : s.size.startsWith('20') ? '40-60' : '90-120'} ml of sealant. Top it up every two to three months, because it dries out faster in warm weather. ${s.sealant} sealant is what we use in the workshop.`,
    ],
    followups: [
      [(s) => `How often do I need to top up the sealant?`, (s) => `Every two to three months is a good rule, more often in hot weather. Shake the wheel next to your ear: if you can't hear any liquid sloshing, it's time.`],
      [(s) => `Can I borrow the inflator this weekend?`, (s) => `Yes, members can borrow it for up to seven days. Book it on the members' page or ask at the counter on Saturday.`],
      [(s) => `What if I get a puncture the sealant can't fix?`, (s) => `Carry a tubeless plug kit for bigger holes, and a spare inner tube as a last resort: take out the valve, wipe out the sealant, and fit the tube as you normally would.`],
    ],
  },
  {
    key: 'puncture',
    asks: [
      (s) => `I keep getting punctures on my back wheel, three in two weeks! What's going on?`,
      (s) => `How do I patch an inner tube properly? My patches keep peeling off.`,
      (s) => `I got a flat with two little holes side by side. What causes that?`,
    ],
    answers: [
      (s) => `Repeated flats on the same wheel usually have one of three causes:\n\n1. Something still stuck in the tyre: run your fingers carefully around the inside of the casing to find a thorn or glass sliver.\n2. A rim tape problem: a spoke hole or sharp edge showing through will puncture the tube on the rim side.\n3. Low pressure, which leads to pinch flats.\n\nCheck where the hole is on the tube compared to the tyre; that often points straight at the cause. If the ${s.tyre} tyre is worn thin, replacing it is cheaper than all those tubes.`,
      (s) => `Patches fail mostly from surface prep. Roughen the area with sandpaper, apply a thin layer of vulcanising solution, and, the important part, wait until it's completely dry and matte (a few minutes) before you press the patch on. Then press hard from the middle outwards for a full minute. Self-adhesive patches are fine for the roadside but glue-on ones last longer.`,
      (s) => `Two holes side by side, like a snake bite, are a pinch flat: the tube was squeezed between the rim and something hard like a kerb or pothole. The fix is more tyre pressure. For a ${s.size} tyre, check the range printed on the sidewall and stay in the upper half if you ride on rough streets.`,
    ],
    followups: [
      [(s) => `Found a tiny piece of glass in the tyre. Thanks!`, (s) => `That'll be it. Pick it out from the inside with tweezers, and check the tyre's tread for a cut. A small cut is fine; anything you can see the casing threads through is worth a tyre boot or a new tyre.`],
      [(s) => `What pressure should I run?`, (s) => `It depends on tyre size and your weight. As a rough guide, wider tyres run lower: a 700x32c might run 55-70 psi, a 29x2.2 somewhere around 22-28 psi. The sidewall shows the safe range.`],
    ],
  },
  {
    key: 'chain-wear',
    match: [[0, 2], [1, 0], [2]],
    asks: [
      (s) => `How do I know when my chain needs replacing?`,
      (s) => `My ${s.chain} chain has done about ${s.km} km. Should I change it?`,
      (s) => `Someone at the workshop said my chain is "stretched". What does that mean?`,
    ],
    answers: [
      (s) => `Chains wear as the pins and rollers wear, which makes the chain effectively longer. The easiest check is a chain wear gauge (there's one at every bench):\n\n- 0.5% wear: time to replace it on 11- and 12-speed drivetrains.\n- 0.75%: replace it on 8- to 10-speed.\n- Past 1%: the cassette has probably worn too, and a new chain may skip on it.\n\nChanging the chain on time is the cheapest way to make the cassette and chainrings last.`,
      (s) => `At ${s.km} km it's worth measuring rather than guessing. Mileage varies a lot with weather and how often the chain is cleaned. Put a chain checker on it: if it drops in at 0.75% (or 0.5% for 11-speed), replace it. A ${s.chain} chain costs $22 at the counter.`,
      (s) => `"Stretched" is workshop shorthand: the metal doesn't actually stretch, but the pins and the inside of the rollers wear, so each link gets a little longer. A worn chain then wears the cassette teeth into its shape. Measure it with a chain checker; if it's past 0.75%, a new chain now saves you a new cassette later.`,
    ],
    followups: [
      [(s) => `Do I need to replace the cassette too?`, (s) => `Only if the new chain skips under load. Fit the new chain first, ride it in a few gears while pedalling hard; if it jumps, the cassette is worn as well.`],
      [(s) => `Can I reuse the quick link?`, (s) => `Most quick links are meant to be used once, especially on 11- and 12-speed chains. They're $4, so it's worth using a new one.`],
      [(s) => `How long should the new chain be?`, (s) => `Easiest is to match the old chain link for link. If that one was wrong, wrap it around the biggest chainring and biggest cog without going through the derailleur, then add two links (one inch).`],
    ],
  },
  {
    key: 'chain-care',
    asks: [
      (s) => `What's the best way to clean and lube my chain?`,
      (s) => `My chain is black and gritty. Should I use degreaser?`,
      (s) => `Wet or dry lube for winter commuting?`,
    ],
    answers: [
      (s) => `A simple routine that works:\n\n1. Wipe the chain with a rag while you backpedal, until the rag comes away mostly clean.\n2. If it's very gritty, use a chain cleaner box or a degreaser and rinse, then let it dry.\n3. Put one drop of lube on each roller, on the inside of the chain.\n4. Leave it a few minutes, then wipe off the excess from the outside.\n\nThe last step matters most: lube on the outside only collects dirt.`,
      (s) => `Yes, if it's black and gritty a degreaser is the way. Citrus degreaser is gentle on seals; scrub with an old toothbrush, rinse, and dry thoroughly before lubing. We have a parts washer at the workshop for members on ${s.day}s.`,
      (s) => `For winter commuting, wet lube lasts much longer in rain and road spray. It attracts more dirt, so wipe the chain every week or two. Dry lube is better for dusty summer riding.`,
    ],
    followups: [
      [(s) => `How often should I lube it?`, (s) => `Roughly every 150-300 km, or after any ride in the rain. If the chain sounds noisy or squeaky, it's overdue.`],
    ],
  },
  {
    key: 'indexing',
    match: [[0], [1], [2], [0]],
    asks: [
      (s) => `My gears keep skipping between the 3rd and 4th cog. How do I fix the indexing?`,
      (s) => `The ${s.mech} rear mech on my bike won't shift up into the bigger cogs cleanly. Any ideas?`,
      (s) => `After replacing the gear cable my shifting is all over the place. Help!`,
      (s) => `Shifting is noisy and it hesitates going to a smaller cog. What do I adjust?`,
    ],
    answers: [
      (s) => `That's almost always cable tension. With the bike in a workstand:\n\n1. Shift to the smallest cog, then click once.\n2. If the chain doesn't move to the next cog, or hesitates, turn the barrel adjuster anticlockwise half a turn (adds tension).\n3. If it over-shifts or makes noise, turn it clockwise.\n4. Repeat in a few different gears until each click moves one cog cleanly.\n\nIf it never settles, check the derailleur hanger: a bent hanger throws everything off, and we have a hanger alignment tool at the workshop.`,
      (s) => `Sluggish shifts towards the bigger cogs mean the cable needs a little more tension, or the cable is dragging in its housing. Try half a turn anticlockwise on the barrel adjuster. If that doesn't help, look at the housing ends: frayed or kinked housing is very common on older bikes, and new cable and housing costs about $12.`,
      (s) => `New cables stretch slightly as they settle, so some readjustment after a week is normal. But if it's "all over the place", start from scratch: shift to the smallest cog, undo the cable clamp bolt, screw the barrel adjuster almost all the way in, pull the cable taut by hand and clamp it again. Then fine-tune with the barrel adjuster, half a turn at a time.`,
    ],
    followups: [
      [(s) => `Which way is anticlockwise when I'm looking from behind?`, (s) => `Look at the barrel adjuster from the back of the bike, where the cable goes in. Anticlockwise from that view unscrews the adjuster and adds tension.`],
      [(s) => `How do I know if the hanger is bent?`, (s) => `Stand behind the bike and look along the cogs: the derailleur's two jockey wheels should hang straight below the cog the chain is on. If they lean towards the wheel, the hanger is bent. Don't bend it back by hand; the alignment tool does it safely.`],
      [(s) => `Thanks, it shifts perfectly now.`, (s) => `Great to hear! Give it a week and check again; new cables settle a little.`],
    ],
  },
  {
    key: 'limit-screws',
    asks: [
      (s) => `My chain fell off the big cog into the spokes. How do I stop that happening?`,
      (s) => `The chain keeps dropping off the small chainring. What should I adjust?`,
    ],
    answers: [
      (s) => `That's the low limit screw, marked "L" on the rear derailleur. It stops the derailleur from moving past the biggest cog. Shift into the biggest cog, then screw the L screw in a quarter turn at a time until the derailleur can't push the chain any further inwards. Please check your spokes for damage: a chain in the spokes can nick them, and a damaged spoke should be replaced.`,
      (s) => `Chain drops off the small ring are usually the front derailleur's low limit. Turn the "L" screw on the front derailleur a quarter turn clockwise, then test by shifting down hard several times. A worn chain or chainring can also cause drops, so check chain wear too.`,
    ],
    followups: [
      [(s) => `One spoke has a small scratch. Is that ok?`, (s) => `A surface scratch is usually fine. If there's a visible notch or the spoke is bent, replace it: spokes fail at damaged points. A volunteer can check it in a minute at the workshop.`],
    ],
  },
  {
    key: 'truing',
    asks: [
      (s) => `My back wheel has a wobble and rubs the brake pad. Can I true it myself?`,
      (s) => `What does it mean to "true" a wheel? The mechanic said mine needs truing.`,
      (s) => `I want to learn wheel truing. Is there a class?`,
    ],
    answers: [
      (s) => `Yes, small wobbles are very fixable. Put the wheel in a truing stand (you can borrow one from the tool library), spin it slowly, and find where the rim moves towards one side.\n\n- To pull the rim left at that spot, tighten the spokes coming from the left flange by a quarter turn and loosen the right-side ones by a quarter turn.\n- Work in small steps, a quarter turn at most, and check after each one.\n- A lateral wobble under about 1 mm won't be noticeable when riding.\n\nIf the rim has a dent or a flat spot, that's a different job; bring it in and ${s.mechanic} will have a look.`,
      (s) => `Truing means adjusting the spoke tension so the rim runs straight, both side to side (lateral true) and up and down (radial true). Spokes loosen or the rim gets knocked over time, and a wheel that is out of true rubs the brakes and wears out sooner. It's a skill worth learning; our wheel class covers it.`,
      (s) => `There is! The wheel basics class runs on the first ${s.day} of each month, 18:00-20:30, and covers truing, spoke replacement and tension. It's free for members; you only need to sign up at the counter or on the members' page because there are six truing stands.`,
    ],
    followups: [
      [(s) => `Which way do I turn the spoke nipple?`, (s) => `Looking down at the nipple from the tyre side, clockwise tightens. From the hub side, as you see it in the stand, it's reversed, which trips everyone up. Think "righty-tighty" from the top of the wheel.`],
      [(s) => `Can I book a truing stand for ${s.day}?`, (s) => `Yes, the truing stand can be booked from the tool library. Loans are up to seven days, with a $20 deposit for the stand.`],
    ],
  },
  {
    key: 'broken-spoke',
    asks: [
      (s) => `A spoke snapped on my rear wheel on the way to work. Can I still ride?`,
      (s) => `How do I replace a broken spoke on the drive side?`,
    ],
    answers: [
      (s) => `You can ride gently to get home, but not much more. With one spoke missing, the wheel goes out of true and the spokes next to it take extra load, so more can break. Open the brake if the rim rubs. For the repair you'll need a spoke of the right length; bring the broken one to the workshop and we'll match it.`,
      (s) => `On the drive side the cassette is in the way, so:\n\n1. Remove the cassette (chain whip and lockring tool, both in the tool library).\n2. Thread the new spoke through the hub flange, following the lacing pattern of its neighbours.\n3. Screw on the nipple and tension it until it feels like its neighbours.\n4. True the wheel.\n\nMeasure the old spoke for length; we keep common sizes in the spoke drawer.`,
    ],
    followups: [
      [(s) => `Do you have spokes in stock?`, (s) => `We keep the common lengths from 258 to 300 mm. Bring the broken spoke and we'll match it; they're $1.50 each.`],
    ],
  },
  {
    key: 'hours',
    asks: [
      (s) => `When is the workshop open?`,
      (s) => `Are you open on Sundays?`,
      (s) => `What time does the open workshop start on ${s.day}?`,
      (s) => `Hi! Is the co-op open over the holidays?`,
    ],
    answers: [
      (s) => `The open workshop runs:\n\n- Tuesday 17:30-21:00\n- Thursday 17:30-21:00\n- Saturday 10:00-16:00\n\nMembers can use the benches and tools during those hours, and volunteer mechanics are around to help. Non-members are welcome on Saturdays for a $5 day pass.`,
      (s) => `We're closed on Sundays, except the first Sunday of the month when we run the kids' bike day from 11:00 to 14:00. The regular open workshop is Tuesday and Thursday evenings and Saturday daytime.`,
      (s) => `On ${s.day} we open at ${s.day === 'Saturday' ? '10:00 and close at 16:00' : '17:30 and close at 21:00'}. The last bench is handed out 45 minutes before closing so there's time to tidy up.`,
      (s) => `Over the holidays we close from 24 December to 1 January and reopen on the first Tuesday after New Year. The tool library stays open for returns through the drop box by the door.`,
    ],
    followups: [
      [(s) => `Do I need to book a bench?`, (s) => `Not necessarily. Benches go first-come, first-served, but you can book one up to a week ahead to be sure. Just ask me to check the free slots.`],
      [(s) => `Where are you exactly?`, (s) => `We're in unit 4 of the old tram depot on Wicklow Row, round the back by the bike racks. Ring the bell if the shutter is half down.`],
    ],
  },
  {
    key: 'tool-library',
    match: [[0], [1], [0]],
    asks: [
      (s) => `Can I borrow a ${s.tool} from the tool library?`,
      (s) => `How does the tool library work?`,
      (s) => `I need a ${s.tool} for a weekend project. Is it available?`,
    ],
    answers: [
      (s) => `Yes, the ${s.tool} is part of the tool library. Members can borrow tools for up to seven days. Larger items like the ${s.tool} carry a $20 deposit that you get back when you return it. You can book on the members' page or at the counter during opening hours.`,
      (s) => `The tool library lends tools to members for up to seven days at a time:\n\n1. Find the tool on the members' page or ask at the counter.\n2. Book it for the days you need.\n3. Pick it up during opening hours; bigger tools take a $20 deposit.\n4. Return it in the same state, or tell us if something broke. Things wear out, and we'd rather know.\n\nThere's no fee beyond your membership.`,
    ],
    followups: [
      [(s) => `What if I return it late?`, (s) => `Let us know and it's usually fine, unless someone else has booked it. Repeated late returns may pause your borrowing for a month.`],
      [(s) => `Can a non-member borrow tools?`, (s) => `The tool library is for members only, but a year's membership is $48, or $20 concession, and it includes the workshop and the library.`],
    ],
  },
  {
    key: 'dues',
    asks: [
      (s) => `How much is membership?`,
      (s) => `I can't afford the full dues right now. Are there other options?`,
      (s) => `When do I need to renew my membership? I joined in ${s.month}.`,
      (s) => `What do I get as a member?`,
    ],
    answers: [
      (s) => `Membership is $48 a year, or $20 for students, under-18s and anyone on a low income; no proof is needed. It includes use of the open workshop, the tool library, and a members' discount on parts.`,
      (s) => `Of course. There's the $20 concession rate, no questions asked, and you can also cover your dues through work-trade: three volunteer hours a month (tidying, sorting donated parts, helping at the kids' bike day). Nobody is turned away for lack of money.`,
      (s) => `Membership runs for twelve months from the day you joined, so you'd renew in ${s.month}. We send a reminder by email two weeks before, and you can renew at the counter or on the members' page.`,
      (s) => `As a member you get:\n\n- the open workshop benches and tools, with volunteer mechanics to help\n- the tool library, up to seven days per loan\n- 15% off parts at the counter\n- free entry to classes like wheel basics and brake bleeding\n- a vote at the co-op's general meeting`,
    ],
    followups: [
      [(s) => `Can I pay monthly?`, (s) => `Yes, $4 a month by standing order works too. Ask at the counter for the form.`],
      [(s) => `How do I sign up for work-trade?`, (s) => `Add your name to the volunteer rota on the members' page, or ask ${s.mechanic} on your next visit. Hours are logged at the counter.`],
    ],
  },
  {
    key: 'volunteering',
    asks: [
      (s) => `I'd like to volunteer as a mechanic. What do I need to know?`,
      (s) => `Can I help out at the co-op even if I'm not great at repairs?`,
    ],
    answers: [
      (s) => `Wonderful! Volunteer mechanics help members at the benches rather than fixing bikes for them. We ask new volunteers to shadow an experienced mechanic for three sessions, and to take the short safety induction (brakes, torque, and how to say "let's get a second opinion"). Talk to ${s.mechanic} on a ${s.day}, or sign up on the members' page.`,
      (s) => `Absolutely. Plenty of jobs need no repair skills: welcoming people at the door, sorting donated parts, keeping the tool library in order, and helping at the kids' bike day. Many volunteers pick up the repair side along the way.`,
    ],
    followups: [
      [(s) => `Is there a minimum number of hours?`, (s) => `No minimum. Most volunteers do one session a month; work-trade members do three hours a month to cover their dues.`],
    ],
  },
  {
    key: 'bottom-bracket',
    asks: [
      (s) => `There's a creak every pedal stroke. Is it the bottom bracket?`,
      (s) => `My cranks wiggle side to side. What does that mean?`,
    ],
    answers: [
      (s) => `It might be, but creaks are sneaky. Go through the cheap suspects first:\n\n1. Pedals: remove, grease the threads, refit.\n2. Crank bolts: check they're at the specified torque.\n3. Chainring bolts: snug them up.\n4. Saddle and seatpost: a creak that happens while pedalling can come from there too.\n\nIf it's still there, the bottom bracket may need cleaning and re-greasing or replacing. The bottom bracket tool set is in the tool library.`,
      (s) => `Side-to-side play in the cranks usually means either a loose crank or a worn bottom bracket. First check the crank bolts are tight. If the play remains, the bottom bracket bearings are worn and need replacing. It's a satisfying job with the right tools, and we have them all.`,
    ],
    followups: [
      [(s) => `What type of bottom bracket do I have?`, (s) => `Check the frame around the cranks: threaded shells show the cups screwed in from outside, press-fit ones sit flush inside the frame. If you bring the bike in, a volunteer can identify it in a minute.`],
    ],
  },
  {
    key: 'headset',
    asks: [
      (s) => `When I brake hard the front of the bike clunks. What's loose?`,
      (s) => `How do I adjust a headset?`,
    ],
    answers: [
      (s) => `A clunk under braking is often a loose headset. Hold the front brake and rock the bike forwards and back; if you feel a knock at the top of the fork, that's it. To adjust: loosen the stem bolts, tighten the top cap bolt a quarter turn at a time until the play is gone but the bars still turn freely, then realign and tighten the stem bolts to their torque.`,
      (s) => `For a threadless headset:\n\n1. Loosen the stem's side bolts.\n2. Tighten the top cap bolt gently until the play disappears.\n3. Check the bars turn smoothly without notches.\n4. Line the stem up with the wheel and tighten the side bolts to the torque printed on the stem.\n\nThe top cap only sets bearing preload; it doesn't hold anything in place. The stem bolts do that, so don't skip step 4.`,
    ],
    followups: [
      [(s) => `What torque for the stem bolts?`, (s) => `It's usually printed on the stem, often 5-6 Nm. Use the torque wrench from the tool library, especially with a carbon steerer.`],
    ],
  },
  {
    key: 'pressure',
    asks: [
      (s) => `What tyre pressure should I run on ${s.size} tyres?`,
      (s) => `Is it bad that my tyres feel soft after a week?`,
    ],
    answers: [
      (s) => `For ${s.size} it depends on your weight and the road, but a starting point is ${s.size.startsWith('7') ? '60-80 psi' : s.size.startsWith('2') && s.size.includes('x2') ? '22-30 psi' : '35-50 psi'}. Look for the range printed on the tyre sidewall and never go above the maximum. Lower pressure is more comfortable and often just as fast on rough roads.`,
      (s) => `Not at all; inner tubes lose some air through the rubber every week, and narrow high-pressure tyres lose it fastest. Pump them up once a week. If a tyre goes flat in a day or two, that's a slow puncture.`,
    ],
    followups: [
      [(s) => `Do you have a pump I can use?`, (s) => `Yes, there's a track pump by the front door, free for anyone, members or not, even when the workshop is closed.`],
    ],
  },
  {
    key: 'fit',
    asks: [
      (s) => `My knees hurt after riding. Could my saddle be at the wrong height?`,
      (s) => `How high should my saddle be?`,
    ],
    answers: [
      (s) => `Very possibly. Pain at the front of the knee often means the saddle is too low; pain at the back means too high. A good start: sit on the saddle with your heel on the pedal at its lowest point, and your leg should be straight. When you pedal normally on the ball of your foot, that leaves a slight bend. Adjust in 5 mm steps. If the pain continues, please see a health professional.`,
      (s) => `Put your heel on the pedal at the bottom of the stroke: your leg should be just straight without rocking your hips. Pedalling on the balls of your feet then gives a slight knee bend. Mark the seatpost with tape before adjusting, so you can go back.`,
    ],
    followups: [
      [(s) => `There's a "minimum insert" line on my seatpost. Does it matter?`, (s) => `Yes, a lot. The line must stay inside the frame; above it, the seatpost or frame can crack. If you need more height, you need a longer seatpost.`],
    ],
  },
  {
    key: 'donations',
    asks: [
      (s) => `I have an old kids' bike to donate. Do you take them?`,
      (s) => `Can I donate a bike that needs a lot of work?`,
    ],
    answers: [
      (s) => `Yes, please! Kids' bikes are always in demand. Bring it during opening hours; we'll check it over, fix it up with volunteers, and pass it on at the kids' bike day. Helmets in good condition are welcome too.`,
      (s) => `We take most bikes, even ones that need work; what we can't fix becomes spare parts. We can't take bikes with cracked frames, and we don't accept e-bike batteries. Drop-offs are easiest on Saturdays.`,
    ],
    followups: [
      [(s) => `Do you give a receipt?`, (s) => `Yes, we can give you a donation receipt at the counter.`],
    ],
  },
  {
    key: 'refurbished',
    asks: [
      (s) => `Do you sell second-hand bikes?`,
      (s) => `I'm looking for a cheap commuter. Do you have anything like a ${s.bike}?`,
    ],
    answers: [
      (s) => `Yes, we sell refurbished bikes donated to the co-op, fixed up by volunteers. Prices run from $60 to $250, and every bike gets a full safety check and a 30-day free tune-up. Stock changes weekly; the current list is on the board by the entrance.`,
      (s) => `We often have commuters in, sometimes a ${s.bike} or similar. The refurbished list is on the board at the workshop and updated every Saturday. If you tell me your height and budget, the volunteers can keep an eye out.`,
    ],
    followups: [
      [(s) => `Can I test ride one?`, (s) => `Of course; bring some ID and you can take it round the yard or the block.`],
    ],
  },
  {
    key: 'classes',
    asks: [
      (s) => `Do you run any maintenance classes for beginners?`,
      (s) => `Is there a class on bleeding hydraulic brakes?`,
    ],
    answers: [
      (s) => `Yes! The beginner maintenance course runs over four Thursday evenings: punctures and tyres, brakes, gears, and a "bring your own bike" session at the end. It's free for members and $30 for non-members. Sign up at the counter; places are limited to eight.`,
      (s) => `There is; the brake bleeding class runs every other month on a Tuesday. It covers mineral-oil and DOT systems, and we provide the bleed kits. Watch the workshop notices for the next date, or ask ${s.mechanic}.`,
    ],
    followups: [
      [(s) => `Do I need to bring my own tools?`, (s) => `No, everything is provided. Just bring your bike, and clothes you don't mind getting oily.`],
    ],
  },
  {
    key: 'ebike',
    asks: [
      (s) => `Can I work on my e-bike at the co-op?`,
      (s) => `Does the co-op repair e-bike batteries?`,
    ],
    answers: [
      (s) => `You're welcome to work on the bike parts of an e-bike at the open workshop: brakes, gears, wheels and tyres. We don't open motors or batteries, and please remove the battery before putting the bike in a workstand.`,
      (s) => `Sorry, we don't repair batteries; it needs specialist equipment and training for safety. For the rest of the bike (brakes, tyres, gears) you're welcome at the open workshop.`,
    ],
    followups: [
      [(s) => `Can I charge the battery at the workshop?`, (s) => `We'd rather you didn't; there's no supervised charging area. Please come with it charged.`],
    ],
  },
  {
    key: 'cassette',
    asks: [
      (s) => `Do I need a special tool to remove my cassette?`,
      (s) => `My new chain skips on the smallest cogs. Why?`,
    ],
    answers: [
      (s) => `Yes, two: a lockring tool matching your cassette, and a chain whip to stop the cassette turning while you undo the lockring. Both are in the tool library as the "chain whip and lockring tool" set.`,
      (s) => `A new chain skipping on the cogs you used most means those cogs are worn. They're usually the small ones. The fix is a new cassette; next time, replacing the chain before it reaches 0.75% wear will make the cassette last much longer.`,
    ],
    followups: [
      [(s) => `How tight does the lockring go?`, (s) => `Typically about 40 Nm; it's printed on the lockring. Use the torque wrench if you have one, or "firm, with a click as it seats".`],
    ],
  },
  {
    key: 'hubs',
    asks: [
      (s) => `My rear wheel has some play when I wiggle it. Is that the hub?`,
      (s) => `How often should I service my hubs?`,
    ],
    answers: [
      (s) => `Side-to-side play at the rim with the axle tight usually means the hub bearings are loose or worn. Cup-and-cone hubs can be adjusted with cone spanners; cartridge bearing hubs need the bearings replaced if they're rough. Cone spanners are at every bench.`,
      (s) => `For everyday riding, once a year is plenty, or after a very wet season. Spin the axle with your fingers: if it feels gritty or notchy, it's time. Cup-and-cone hubs just need cleaning, fresh grease and readjusting.`,
    ],
    followups: [
      [(s) => `Which grease should I use?`, (s) => `Any good waterproof bearing grease. We have a big tub at the workshop for members.`],
    ],
  },
  {
    key: 'rim-brake',
    asks: [
      (s) => `My rim brake lever pulls almost all the way to the bar. What should I do?`,
      (s) => `How do I adjust the cable on my V-brakes?`,
    ],
    answers: [
      (s) => `First check the pads: worn rim brake pads let the lever travel further. If they're fine, take up the slack with the barrel adjuster at the lever: turn it anticlockwise a couple of turns. If you run out of adjustment, undo the cable clamp bolt, pull some cable through, and tighten again. Test hard before you ride.`,
      (s) => `Screw the barrel adjuster at the lever most of the way in, then undo the cable clamp on the brake arm, squeeze the arms so the pads are about 2 mm from the rim, and clamp the cable. Fine-tune with the barrel adjuster. Check both pads hit the rim squarely and not the tyre.`,
    ],
    followups: [
      [(s) => `The pads are hitting the rim at an angle.`, (s) => `Loosen the pad bolt, hold the pad flat against the rim with the brake squeezed, and tighten it again. A slight toe-in, with the front edge touching first, helps stop squealing.`],
    ],
  },
];

/** Short closing turns that keep a chat going naturally. */
export const THANKS = [
  [(s) => `Thanks, that's really helpful!`, (s) => `You're welcome, ${s.name}! Enjoy the ride, and see you at the workshop.`],
  [(s) => `Perfect, thank you.`, (s) => `Glad I could help. If anything comes up, just ask.`],
  [(s) => `Cheers, I'll give it a go this weekend.`, (s) => `Good luck! If it gets fiddly, the volunteers on Saturday are happy to help.`],
  [(s) => `Great, see you ${s.day}.`, (s) => `See you then! Bring your membership card for the tool library.`],
];
