"""First-person persona pairs for training and checking the built-in model: a reproducible generator.

    python scripts/train/persona_pairs.py --out runs/persona      # writes train.jsonl and heldout.jsonl

gainsay compares a character's facts ("I keep bees and sell honey") with sentences of chit-chat replies
("I work as a banker"), so the model must know the everyday exclusions of persona attributes, which
image captions (SNLI) do not teach. Labels here are not written by hand per pair: every attribute is a
small space of possible worlds (how many brothers and sisters, which of three drinks a character takes,
an age from 15 to 90, ...) and every statement template holds in a subset of them. For a premise P and a
hypothesis H:

- contradiction when no world satisfies both;
- entailment when every world of P satisfies H (and H adds nothing the worlds do not model);
- neutral otherwise.

So "I am an only child" / "My brother helps me" is a contradiction, "I drink only tea" / "A pot of tea
is warming on my stove" is neutral (the pot adds information the worlds do not model), "I have two old
sheepdogs" / "I have dogs" is an entailment, and a fact of one attribute against a reply of another is
neutral. Pairs come both ways round (gainsay reads each pair both ways) with the label the logic gives
for that order.

Held out for the generalisation check, never in train.jsonl: whole attributes (languages, possessions and
their colours, appearance, education) and, within the other attributes, every fourth value of each
value list (jobs, countries, foods, instruments, species, ...). heldout.jsonl is made only of those, so
its figures measure generalisation rather than memorised templates.

Persona sentences and utterances of Synthetic-Persona-Chat (shared/data/persona_chat_synthetic, CC BY
4.0; Jandaghi et al. 2023) give natural material: a persona sentence against a rule-based negation of
itself (contradiction), against an utterance of the same speaker that shares its content words
(consistent: entailment or neutral), and against an utterance of another conversation (neutral); and
two nearby utterances of the same speaker (neutral: the conversations were generated to be faithful to
the personas, so these are same-topic pairs that do not contradict). The last kind matters: DECODE's
contradictions are same-speaker, same-topic pairs, and without consistent pairs of that kind a model
learns that a pair about the same thing is a contradiction. Conversations are split 80/20 by index,
the last fifth held out.

Fixed seed; the same command writes the same files.
"""
from __future__ import annotations

import argparse
import csv
import itertools
import json
import os
import random
import re
from dataclasses import dataclass, field
from typing import Callable

from nli_data import data_dir

SEED = 29

# ---------------------------------------------------------------------------------------------------
# Value lists. Every fourth value of each list (index % 4 == 3) is held out.


def split_values(values: list, held: bool) -> list:
    return [v for i, v in enumerate(values) if (i % 4 == 3) == held]


def some(rng: random.Random, values: list, k: int) -> list:
    """k values drawn without replacement, fewer where the list is short (the held-out quarters)."""
    return rng.sample(values, min(k, len(values)))


JOBS = [
    ("a nurse", "nursing"), ("a teacher", "teaching"), ("a farmer", "farming"), ("a baker", "baking"),
    ("a plumber", "plumbing"), ("a pilot", "flying planes"), ("a lawyer", "law"), ("a banker", "banking"),
    ("a beekeeper", "beekeeping"), ("a carpenter", "carpentry"), ("a chef", "cooking in a restaurant"),
    ("a firefighter", "firefighting"), ("a librarian", "the library"), ("a mechanic", "fixing cars"),
    ("a dentist", "dentistry"), ("a fisherman", "fishing boats"), ("a painter", "painting houses"),
    ("an accountant", "accounting"), ("a postman", "delivering mail"), ("an architect", "architecture"),
    ("an electrician", "electrical work"), ("a tailor", "tailoring"), ("a gardener", "gardening"),
    ("a shepherd", "herding sheep"), ("a miner", "mining"), ("a sailor", "sailing ships"),
    ("a translator", "translation"), ("a vet", "treating animals"), ("a police officer", "policing"),
    ("a hairdresser", "cutting hair"), ("a truck driver", "driving trucks"), ("a blacksmith", "the forge"),
    ("a cashier", "the till"), ("a surgeon", "surgery"), ("a journalist", "journalism"),
    ("a butcher", "the butcher's shop"), ("a waiter", "waiting tables"), ("a potter", "pottery"),
    ("a software developer", "writing software"), ("a cleaner", "cleaning offices"),
]
DWELLINGS = [
    "an apartment", "a cottage", "a farmhouse", "a houseboat", "a caravan", "a log cabin", "a mansion",
    "a tent", "a monastery", "a bungalow", "a lighthouse", "a treehouse", "a castle", "a dormitory",
    "a windmill", "a yurt",
]
COUNTRIES = [
    "Spain", "Japan", "Brazil", "Canada", "Egypt", "India", "Norway", "Mexico", "Kenya", "Peru", "Italy",
    "Vietnam", "Iceland", "Chile", "Ireland", "Morocco", "Greece", "Australia", "Poland", "Thailand",
    "Portugal", "Argentina", "Finland", "Turkey",
]
SETTINGS = [  # (where, a place it excludes)
    ("in a big city", "in a tiny village"), ("on a farm", "in the middle of the city"),
    ("by the sea", "hundreds of miles from the sea"), ("in the mountains", "on the flat plains"),
    ("on an island", "far inland"), ("in the desert", "in a rainy valley"),
    ("in the city centre", "out in the countryside"), ("in the north", "in the far south"),
]
SPECIES = [
    ("dog", "dogs"), ("cat", "cats"), ("parrot", "parrots"), ("horse", "horses"), ("rabbit", "rabbits"),
    ("goldfish", "goldfish"), ("hamster", "hamsters"), ("snake", "snakes"), ("tortoise", "tortoises"),
    ("ferret", "ferrets"), ("goat", "goats"), ("lizard", "lizards"),
]
MEATS = ["steak", "bacon", "chicken wings", "a burger", "a ham sandwich", "pork chops", "lamb stew",
         "sausages", "meatballs", "roast beef", "a chicken curry", "a pepperoni pizza"]
FISH = ["grilled salmon", "fish and chips", "sushi", "tuna salad", "fried cod", "prawns", "smoked trout",
        "sardines"]
DAIRY = ["a cheese omelette", "scrambled eggs", "a glass of milk", "ice cream", "a yogurt", "cheesecake",
         "buttered toast", "a milkshake"]
PLAIN_FOOD = ["a salad", "lentil soup", "a bowl of rice", "an apple", "roasted vegetables", "bread and jam",
              "a bean stew", "porridge"]
ALCOHOL = ["a glass of wine", "a cold beer", "whiskey", "a pint of cider", "a gin and tonic", "rum",
           "a bottle of beer", "champagne"]
INSTRUMENTS = ["violin", "guitar", "piano", "drums", "flute", "cello", "trumpet", "accordion", "harp",
               "saxophone", "banjo", "clarinet", "fiddle", "ukulele", "bagpipes", "organ"]
GENRES = ["jazz", "country music", "heavy metal", "opera", "rap", "classical music", "reggae", "folk music",
          "pop music", "techno", "the blues", "punk rock"]
ACTIVITIES = [  # (gerund, a habitual reply about doing it)
    ("hiking", "I go hiking every weekend"), ("knitting", "I knit something every evening"),
    ("fishing", "I go fishing whenever I can"), ("painting", "I paint in my studio every day"),
    ("gardening", "I spend all my free time in the garden"), ("chess", "I play chess every night"),
    ("cooking", "I cook every meal from scratch"), ("dancing", "I go dancing every Friday"),
    ("reading", "I read a book a week"), ("running", "I go running every morning"),
    ("camping", "I go camping most weekends"), ("baking", "I bake bread every Sunday"),
    ("cycling", "I cycle to work every day"), ("sewing", "I sew all my own clothes"),
    ("swimming", "I swim laps every morning"), ("skiing", "I go skiing every winter"),
    ("birdwatching", "I spend my weekends watching birds"), ("video games", "I play video games every night"),
    ("yoga", "I do yoga every morning"), ("woodworking", "I build furniture in my shed"),
]
SEASONS = ["winter", "summer", "spring", "autumn", "rainy days", "snow", "hot weather", "thunderstorms"]
FEARS = [  # (thing, a reply that shows loving it)
    ("heights", "I love standing at the edge of tall cliffs"), ("water", "I swim far out into the sea every day"),
    ("flying", "I love flying and take a plane every month"), ("dogs", "I love dogs and pet every one I meet"),
    ("the dark", "I love walking alone in the dark"), ("spiders", "I keep spiders as pets and love them"),
    ("crowds", "I love being in huge crowds"), ("snakes", "I love holding snakes"),
    ("deep water", "I go diving in deep water every week"), ("horses", "I ride horses every day and love it"),
    ("thunder", "I love a loud thunderstorm"), ("hospitals", "I love spending time in hospitals"),
]
ABILITIES = [  # (verb, an affirming reply, a denying reply)
    ("swim", "I swim every morning", "I never learned to swim"),
    ("cook", "I cook dinner for the whole family every night", "I can't even boil an egg"),
    ("drive", "I drove my car to the coast yesterday", "I never learned to drive"),
    ("dance", "I dance at every party", "I have two left feet and never dance"),
    ("ski", "I ski down the steepest slopes", "I have never been on skis"),
    ("sew", "I sewed my own wedding dress", "I can't even sew on a button"),
    ("ride a bike", "I ride my bike everywhere", "I never learned to ride a bike"),
    ("whistle", "I whistle while I work", "I have never been able to whistle"),
]
LANGUAGES = ["French", "Spanish", "German", "Italian", "Japanese", "Russian", "Arabic", "Dutch", "Greek",
             "Swedish", "Korean", "Polish"]
COLOURS = ["red", "blue", "green", "black", "white", "yellow", "silver", "orange"]
THINGS = ["car", "bike", "front door", "boat", "coat", "truck", "scooter", "kitchen"]
HAIR = ["red", "black", "blonde", "grey", "brown", "white"]
SUBJECTS = ["history", "chemistry", "law", "medicine", "music", "biology", "art", "physics"]
NUMBERS = ["zero", "one", "two", "three", "four", "five", "six", "seven", "eight", "nine", "ten", "eleven",
           "twelve", "thirteen", "fourteen", "fifteen", "sixteen", "seventeen", "eighteen", "nineteen"]
TENS = ["", "", "twenty", "thirty", "forty", "fifty", "sixty", "seventy", "eighty", "ninety"]


def number_words(n: int) -> str:
    if n < 20:
        return NUMBERS[n]
    t, u = divmod(n, 10)
    return TENS[t] + ("-" + NUMBERS[u] if u else "")


# ---------------------------------------------------------------------------------------------------
# The world engine.


@dataclass
class Statement:
    """Sentences (alternatives) that hold exactly in the worlds where holds() is true. adds: the
    sentence says more than the worlds model, so it can never be entailed."""
    texts: list[str]
    holds: Callable[[object], bool]
    adds: bool = False
    role: str = "any"  # "fact": only as a profile fact; "reply": only as a reply sentence


@dataclass
class Topic:
    name: str
    worlds: list
    statements: list[Statement] = field(default_factory=list)

    def add(self, texts, holds, adds=False, role="any"):
        if isinstance(texts, str):
            texts = [texts]
        self.statements.append(Statement(list(texts), holds, adds, role))


def label(topic: Topic, p: Statement, h: Statement) -> str:
    wp = [w for w in topic.worlds if p.holds(w)]
    wh = {i for i, w in enumerate(topic.worlds) if h.holds(w)}
    if not wp:
        raise ValueError(f"{topic.name}: premise holds nowhere: {p.texts[0]}")
    both = [w for i, w in enumerate(topic.worlds) if i in wh and p.holds(w)]
    if not both:
        return "contradiction"
    if not h.adds and all(h.holds(w) for w in wp):
        return "entailment"
    return "neutral"


# ---------------------------------------------------------------------------------------------------
# Topics. Each builder takes rng and held (which half of every value list) and returns Topics; several
# topics of one attribute differ in the values drawn.


def counts_topic(name, kinds, rng, max_n=2, owner="I have", none_text=None, only=True):
    """Worlds: a count 0..max_n for each of two or three kinds (e.g. brothers, sisters)."""
    worlds = list(itertools.product(range(max_n + 1), repeat=len(kinds)))
    t = Topic(name, worlds)
    for k, (one, many) in enumerate(kinds):
        t.add([f"{owner} a {one}.", f"{owner} one {one}."], lambda w, k=k: w[k] == 1)
        t.add([f"{owner} two {many}.", f"{owner} a pair of {many}."], lambda w, k=k: w[k] == 2)
        t.add([f"{owner} no {many}.", f"I don't have any {many}."], lambda w, k=k: w[k] == 0)
        t.add([f"My {one} is coming to visit this weekend.", f"My {one} always makes me laugh.",
               f"I was out with my {one} all afternoon.", f"My {one} loves the beach."],
              lambda w, k=k: w[k] >= 1, adds=True, role="reply")
        t.add([f"My two {many} are asleep by the fire.", f"Both of my {many} are getting old."],
              lambda w, k=k: w[k] == 2, adds=True, role="reply")
        if only:
            t.add([f"My only {one} lives far away.", f"I have just the one {one}."],
                  lambda w, k=k: w[k] == 1, adds=True)
        t.add([f"I have {many}.", f"I do have {many}, yes."], lambda w, k=k: w[k] >= 1)
    if none_text:
        t.add(none_text, lambda w: sum(w) == 0)
    t.add(["I have a big family.", "There are a lot of us at home."], lambda w: sum(w) >= 2, adds=True, role="reply")
    return t


def family_topics(rng, held):
    return [
        counts_topic("siblings", [("brother", "brothers"), ("sister", "sisters")], rng, max_n=3,
                     none_text=["I am an only child.", "I have no siblings.", "I grew up without brothers or sisters."]),
        counts_topic("children", [("son", "sons"), ("daughter", "daughters")], rng, max_n=2,
                     none_text=["I have no children.", "I don't have kids.", "I never had any children."]),
    ]


def pets_topics(rng, held):
    out = []
    kinds = split_values(SPECIES, held)
    for _ in range(6):
        trio = some(rng, kinds, 3)
        t = counts_topic("pets", trio, rng, max_n=2,
                         none_text=["I don't have any pets.", "I have never owned a pet.", "I have no pets."])
        for k, (one, many) in enumerate(trio):
            t.add([f"My only pet is a {one}.", f"The only animal I keep is a {one}."],
                  lambda w, k=k: w[k] == 1 and sum(w) == 1)
            t.add([f"I am allergic to {many}, so I could never keep one."], lambda w, k=k: w[k] == 0, adds=True)
        out.append(t)
    return out


def marital_topics(rng, held):
    states = ["single", "married", "divorced", "widowed", "engaged"]
    t = Topic("marital", states)
    t.add(["I am married.", "I'm a married man.", "I'm a married woman."], lambda w: w == "married")
    t.add(["My wife makes the best soup.", "My husband is waiting for me at home.",
           "My wife and I go walking on Sundays.", "My husband cooks dinner every night."],
          lambda w: w == "married", adds=True, role="reply")
    t.add(["I have never been married.", "I've never married.", "I never got married."],
          lambda w: w in ("single", "engaged"))
    t.add(["I am single.", "I'm not married."], lambda w: w in ("single", "divorced", "widowed"))
    t.add(["My wife died years ago.", "My husband passed away a long time ago.", "I am a widow."],
          lambda w: w == "widowed")
    t.add(["I got divorced last year.", "I'm divorced."], lambda w: w == "divorced")
    t.add(["I am engaged to be married.", "My fiancé and I are getting married in June."], lambda w: w == "engaged")
    t.add(["I celebrated my wedding anniversary last week."], lambda w: w == "married", adds=True, role="reply")
    return [t]


def age_topics(rng, held):
    worlds = list(range(14, 91))
    out = []
    for _ in range(8):
        t = Topic("age", worlds)
        for n in rng.sample(worlds, 6):
            words = number_words(n)
            t.add([f"I am {words} years old.", f"I'm {n}.", f"I am {words}.", f"I'm {words} years old."],
                  lambda w, n=n: w == n)
            t.add([f"I just turned {words}.", f"I turned {n} last month."], lambda w, n=n: w == n, adds=True)
        for lo in (20, 30, 40, 50, 60, 70, 80):
            decade = TENS[lo // 10][:-1] + "ies"  # twenty -> twenties
            t.add([f"I'm in my {decade}.", f"I am in my {decade}."],
                  lambda w, lo=lo: lo <= w < lo + 10)
        t.add(["I'm still in high school.", "I'm in my last year of school."], lambda w: w <= 18, adds=True)
        t.add(["I'm a teenager.", "I'm just a teenager."], lambda w: w <= 19)
        t.add(["I retired years ago.", "I have been retired for a long time."], lambda w: w >= 60, adds=True)
        t.add(["My grandchildren visit me every Sunday."], lambda w: w >= 45, adds=True, role="reply")
        t.add(["I'm over fifty.", "I'm past fifty now."], lambda w: w > 50)
        t.add(["I'm not even thirty yet.", "I'm under thirty."], lambda w: w < 30)
        t.add(["My birthday is next week.", "I feel older than I am."], lambda w: True, adds=True, role="reply")
        out.append(t)
    return out


def job_topics(rng, held):
    jobs = split_values(JOBS, held)
    out = []
    for _ in range(10):
        pick = some(rng, jobs, 4)
        t = Topic("job", [j for j, _ in pick] + [None])
        for a, field_ in pick:
            t.add([f"I work as {a}.", f"I am {a}.", f"I'm {a} by trade.", f"I have been {a} for years."],
                  lambda w, a=a: w == a)
            t.add([f"I've worked in {field_} all my life.", f"I love my work as {a}.",
                   f"Being {a} keeps me busy.", f"As {a}, I start work early."], lambda w, a=a: w == a, adds=True)
            t.add([f"I'm not {a}.", f"I don't work as {a}."], lambda w, a=a: w != a)
            t.add([f"I have never worked as {a}.", f"I know nothing about {field_}."], lambda w, a=a: w != a, adds=True)
        t.add(["I have never had a job.", "I'm unemployed and always have been."], lambda w: w is None)
        t.add(["Work was long today.", "My boss gave me a day off.", "I'm tired after work.",
               "My colleagues are nice."], lambda w: w is not None, adds=True, role="reply")
        out.append(t)
    return out


def home_topics(rng, held):
    out = []
    dw = split_values(DWELLINGS, held)
    for _ in range(6):
        pick = some(rng, dw, 4)
        t = Topic("dwelling", pick)
        for d in pick:
            t.add([f"I live in {d}.", f"My home is {d}.", f"Home for me is {d}."], lambda w, d=d: w == d)
            # "never lived in" also speaks of the past, which the worlds do not model: never entailed.
            t.add([f"I have never lived in {d}."], lambda w, d=d: w != d, adds=True)
            t.add([f"I don't live in {d}."], lambda w, d=d: w != d)
            t.add([f"I love coming home to my {d.split(' ', 1)[1]}."], lambda w, d=d: w == d, adds=True, role="reply")
        t.add(["My place is small but cozy.", "I painted my kitchen last week.", "My neighbours are loud."],
              lambda w: True, adds=True, role="reply")
        out.append(t)
    countries = split_values(COUNTRIES, held)
    for _ in range(8):
        pick = some(rng, countries, 4)
        t = Topic("country", pick)
        for c in pick:
            t.add([f"I live in {c}.", f"I have lived in {c} all my life.", f"Home is {c} for me."],
                  lambda w, c=c: w == c)
            t.add([f"I was born and raised in {c}.", f"I grew up in {c} and never moved."], lambda w, c=c: w == c)
            t.add([f"I have never lived in {c}.", f"I've never even been to {c}."], lambda w, c=c: w != c, adds=True)
            t.add([f"I don't live in {c}."], lambda w, c=c: w != c)
        out.append(t)
    for where, other in split_values(SETTINGS, held):
        t = Topic("setting", ["here", "there", "elsewhere"])
        t.add([f"I live {where}.", f"My home is {where}."], lambda w: w == "here")
        t.add([f"I live {other}.", f"My house is {other}."], lambda w: w == "there")
        t.add([f"I have never lived {where}."], lambda w: w != "here", adds=True)
        out.append(t)
    return out


def diet_topics(rng, held):
    # worlds: (meat, fish, dairy)
    worlds = list(itertools.product((0, 1), repeat=3))
    out = []
    for _ in range(6):
        t = Topic("diet", worlds)
        t.add(["I am a vegetarian.", "I'm vegetarian.", "I have been a vegetarian for years."],
              lambda w: w[0] == 0 and w[1] == 0)
        t.add(["I am vegan.", "I'm a vegan.", "I eat no animal products at all."], lambda w: w == (0, 0, 0))
        t.add(["I never eat meat.", "I don't eat meat.", "I gave up meat years ago."], lambda w: w[0] == 0)
        t.add(["I eat fish but no other meat.", "The only meat I eat is fish."], lambda w: w[0] == 0 and w[1] == 1)
        t.add(["I don't eat fish.", "I never eat fish."], lambda w: w[1] == 0)
        t.add(["I don't eat dairy or eggs.", "I never touch milk or eggs."], lambda w: w[2] == 0)
        for m in some(rng, split_values(MEATS, held), 3):
            t.add([f"I had {m} for dinner.", f"Nothing beats {m}.", f"I ate {m} for lunch today."],
                  lambda w: w[0] == 1, adds=True, role="reply")
        for f in some(rng, split_values(FISH, held), 2):
            t.add([f"I had {f} for dinner.", f"I love {f}."], lambda w: w[1] == 1, adds=True, role="reply")
        for d in some(rng, split_values(DAIRY, held), 2):
            t.add([f"I had {d} this morning.", f"I could live on {d}."], lambda w: w[2] == 1, adds=True, role="reply")
        for p in some(rng, split_values(PLAIN_FOOD, held), 2):
            t.add([f"I had {p} for lunch.", f"I'm making {p} tonight."], lambda w: True, adds=True, role="reply")
        out.append(t)
    return out


def drink_topics(rng, held):
    worlds = list(itertools.product((0, 1), repeat=3))  # (tea, coffee, alcohol)
    out = []
    for _ in range(5):
        t = Topic("drink", worlds)
        t.add(["I drink only tea.", "Tea is the only thing I drink.", "I only ever drink tea."],
              lambda w: w == (1, 0, 0))
        t.add(["I never drink alcohol.", "I don't drink alcohol.", "I have been sober all my life."],
              lambda w: w[2] == 0)
        t.add(["I don't drink coffee.", "I never touch coffee."], lambda w: w[1] == 0)
        t.add(["I don't drink tea.", "I can't stand tea."], lambda w: w[0] == 0)
        t.add(["I drink coffee every morning.", "I can't start the day without coffee."], lambda w: w[1] == 1)
        t.add(["A pot of tea is always warming on my stove.", "I just made a fresh pot of tea."],
              lambda w: w[0] == 1, adds=True, role="reply")
        for a in some(rng, split_values(ALCOHOL, held), 3):
            t.add([f"I had {a} last night.", f"I like {a} after work.", f"Nothing beats {a} on a Friday."],
                  lambda w: w[2] == 1, adds=True, role="reply")
        t.add(["I'd like a glass of water, please.", "Water is fine for me."], lambda w: True, adds=True, role="reply")
        out.append(t)
    return out


def instrument_topics(rng, held):
    out = []
    inst = split_values(INSTRUMENTS, held)
    for _ in range(8):
        trio = some(rng, inst, 3)
        t = Topic("instruments", list(itertools.product((0, 1), repeat=3)))
        for k, x in enumerate(trio):
            t.add([f"I play the {x}.", f"I can play the {x}.", f"I have played the {x} since I was a child."],
                  lambda w, k=k: w[k] == 1)
            t.add([f"I don't play the {x}.", f"I have never played the {x}."], lambda w, k=k: w[k] == 0)
            t.add([f"The only instrument I play is the {x}."], lambda w, k=k: w[k] == 1 and sum(w) == 1)
            t.add([f"My {x} needs new strings.", f"I practised the {x} for two hours today.",
                   f"Let me fetch my {x} and play you a tune."], lambda w, k=k: w[k] == 1, adds=True, role="reply")
        t.add(["I have never played an instrument.", "I can't play any instrument.", "I'm not musical at all."],
              lambda w: sum(w) == 0)
        out.append(t)
    return out


def attitude_topic(name, thing, rng, doing=None):
    """Worlds: an attitude to one thing, from hate to love."""
    att = ["hate", "dislike", "indifferent", "like", "love"]
    t = Topic(name, att)
    t.add([f"I love {thing}.", f"{thing[0].upper() + thing[1:]} is my favourite thing.", f"I adore {thing}."],
          lambda w: w == "love")
    t.add([f"I like {thing}.", f"I enjoy {thing}."], lambda w: w in ("like", "love"))
    t.add([f"I hate {thing}.", f"I can't stand {thing}.", f"{thing[0].upper() + thing[1:]} is the worst."],
          lambda w: w == "hate")
    t.add([f"I don't like {thing}.", f"I'm not a fan of {thing}.", f"{thing[0].upper() + thing[1:]} bores me."],
          lambda w: w in ("hate", "dislike", "indifferent"))
    t.add([f"I don't mind {thing}."], lambda w: w in ("indifferent", "like", "love"))
    if doing:
        t.add([f"{doing}.", f"{doing}, it's my passion."], lambda w: w in ("like", "love"), adds=True, role="reply")
    return t


def likes_topics(rng, held):
    out = []
    for g in split_values(GENRES, held):
        out.append(attitude_topic("music-genre", g, rng))
    for a, doing in split_values(ACTIVITIES, held):
        out.append(attitude_topic("activity", a, rng, doing))
    for s in split_values(SEASONS, held):
        out.append(attitude_topic("season", s, rng))
    for thing, loving in split_values(FEARS, held):
        t = Topic("fear", ["afraid", "fine", "loves"])
        t.add([f"I am afraid of {thing}.", f"I'm scared of {thing}.", f"{thing[0].upper() + thing[1:]} terrify me."
               if thing.endswith("s") else f"{thing[0].upper() + thing[1:]} terrifies me."], lambda w: w == "afraid")
        t.add([f"I'm not afraid of {thing}.", f"{thing[0].upper() + thing[1:]} don't scare me at all."
               if thing.endswith("s") else f"{thing[0].upper() + thing[1:]} doesn't scare me at all."],
              lambda w: w != "afraid")
        t.add([f"{loving}.", f"{loving}, honestly."], lambda w: w == "loves", adds=True, role="reply")
        out.append(t)
    return out


def habit_topics(rng, held):
    out = []
    t = Topic("waking", ["early", "late"])
    t.add(["I get up before sunrise.", "I wake up at five every morning.", "I'm an early riser."], lambda w: w == "early")
    t.add(["I sleep until noon.", "I never get up before ten.", "I'm not a morning person at all."], lambda w: w == "late")
    out.append(t)
    t = Topic("bedtime", ["early", "late"])
    t.add(["I go to bed early.", "I'm always in bed by nine."], lambda w: w == "early")
    t.add(["I stay up until three in the morning.", "I'm a night owl.", "I never go to bed before midnight."],
          lambda w: w == "late")
    out.append(t)
    t = Topic("smoking", ["never", "quit", "smoker"])
    t.add(["I have never smoked.", "I've never touched a cigarette."], lambda w: w == "never")
    t.add(["I quit smoking years ago.", "I used to smoke but I quit."], lambda w: w == "quit")
    t.add(["I smoke a pack a day.", "I'm having a cigarette on the porch."], lambda w: w == "smoker")
    t.add(["I don't smoke.", "I'm not a smoker."], lambda w: w != "smoker")
    out.append(t)
    t = Topic("exercise", ["never", "sometimes", "daily"])
    t.add(["I exercise every day.", "I work out every single day."], lambda w: w == "daily")
    t.add(["I never exercise.", "I haven't exercised in years."], lambda w: w == "never")
    t.add(["I try to exercise now and then."], lambda w: w == "sometimes", adds=True)
    t.add(["I went to the gym this morning.", "I just got back from a long run."], lambda w: w != "never",
          adds=True, role="reply")
    out.append(t)
    t = Topic("driving", list(itertools.product((0, 1), repeat=2)))  # (drives, owns a car)
    t.add(["I do not drive.", "I can't drive.", "I never learned to drive."], lambda w: w[0] == 0)
    t.add(["I drove to work this morning.", "I drive everywhere."], lambda w: w[0] == 1, adds=True, role="reply")
    t.add(["I don't own a car.", "I have never owned a car."], lambda w: w[1] == 0)
    t.add(["My car broke down again.", "I just washed my car."], lambda w: w[1] == 1, adds=True, role="reply")
    t.add(["I take the bus everywhere.", "The tram is how I get around."], lambda w: True, adds=True, role="reply")
    out.append(t)
    for verb, yes, no in split_values(ABILITIES, held):
        t = Topic("ability", ["can", "cannot"])
        t.add([f"I cannot {verb}.", f"I can't {verb}.", f"I don't know how to {verb}."], lambda w: w == "cannot")
        t.add([f"I can {verb}.", f"I know how to {verb}."], lambda w: w == "can")
        t.add([f"{yes}.", f"{yes}, you know."], lambda w: w == "can", adds=True, role="reply")
        t.add([f"{no}.", f"Sadly, {no[0].lower() + no[1:]}."], lambda w: w == "cannot", adds=True, role="reply")
        out.append(t)
    return out


def travel_topics(rng, held):
    out = []
    countries = split_values(COUNTRIES, held)
    for _ in range(8):
        trio = some(rng, countries, 3)
        t = Topic("travel", list(itertools.product((0, 1), repeat=3)))
        t.add(["I have never left my home country.", "I've never been abroad.", "I have never travelled abroad."],
              lambda w: sum(w) == 0)
        t.add(["I have never left my hometown.", "I've never left this valley in my life."], lambda w: sum(w) == 0,
              adds=True)
        t.add(["I love to travel abroad.", "I travel abroad every year."], lambda w: sum(w) >= 1, adds=True)
        for k, c in enumerate(trio):
            t.add([f"I have been to {c}.", f"I visited {c} twice.", f"I flew to {c} last summer."],
                  lambda w, k=k: w[k] == 1)
            t.add([f"I have never been to {c}.", f"I've never visited {c}."], lambda w, k=k: w[k] == 0)
            t.add([f"I would love to visit {c} one day.", f"{c} is on my list of places to see."],
                  lambda w, k=k: w[k] == 0, adds=True, role="reply")
            t.add([f"My trip to {c} was the best time of my life."], lambda w, k=k: w[k] == 1, adds=True, role="reply")
        out.append(t)
    return out


# Held-out attributes: never in train.jsonl.

def language_topics(rng, held):
    out = []
    for _ in range(6):
        trio = rng.sample(LANGUAGES, 3)
        t = Topic("languages", list(itertools.product((0, 1), repeat=3)))
        t.add(["I only speak English.", "English is the only language I speak."], lambda w: sum(w) == 0)
        for k, lang in enumerate(trio):
            t.add([f"I speak {lang}.", f"I speak fluent {lang}.", f"I grew up speaking {lang}."],
                  lambda w, k=k: w[k] == 1)
            t.add([f"I don't speak {lang}.", f"I don't know a word of {lang}."], lambda w, k=k: w[k] == 0)
        t.add(["I speak four languages.", "I speak several languages."], lambda w: sum(w) >= 2, adds=True)
        out.append(t)
    return out


def possession_topics(rng, held):
    out = []
    for thing in THINGS:
        pick = rng.sample(COLOURS, 4)
        t = Topic("colour", pick + [None])
        for c in pick:
            t.add([f"My {thing} is {c}.", f"I have a {c} {thing}."], lambda w, c=c: w == c)
            t.add([f"My {thing} isn't {c}."], lambda w, c=c: w != c)
        t.add([f"I don't have a {thing}.", f"I have never owned a {thing}."], lambda w: w is None)
        t.add([f"I cleaned my {thing} today."], lambda w: w is not None, adds=True, role="reply")
        out.append(t)
    return out


def appearance_topics(rng, held):
    out = []
    t = Topic("height", ["tall", "average", "short"])
    t.add(["I am very tall.", "I'm over six feet tall."], lambda w: w == "tall")
    t.add(["I am very short.", "I'm the shortest person I know."], lambda w: w == "short")
    out.append(t)
    t = Topic("hair", HAIR + ["bald"])
    for h in HAIR:
        t.add([f"I have {h} hair.", f"My hair is {h}."], lambda w, h=h: w == h)
    t.add(["I am completely bald.", "I have no hair at all."], lambda w: w == "bald")
    out.append(t)
    t = Topic("glasses", ["wears", "not"])
    t.add(["I wear glasses.", "I can't see a thing without my glasses."], lambda w: w == "wears")
    t.add(["I have perfect eyesight and have never needed glasses."], lambda w: w == "not")
    out.append(t)
    return out


def education_topics(rng, held):
    worlds = [None] + SUBJECTS + ["dropout"]
    out = []
    for _ in range(4):
        t = Topic("education", worlds)
        for s in rng.sample(SUBJECTS, 3):
            t.add([f"I studied {s} at university.", f"I have a degree in {s}."], lambda w, s=s: w == s)
            t.add([f"I never studied {s}."], lambda w, s=s: w != s)
        t.add(["I never went to university.", "I never went to college."], lambda w: w in (None, "dropout"))
        t.add(["I dropped out of high school."], lambda w: w == "dropout", adds=True)
        out.append(t)
    return out


TRAIN_BUILDERS = [family_topics, pets_topics, marital_topics, age_topics, job_topics, home_topics, diet_topics,
                  drink_topics, instrument_topics, likes_topics, habit_topics, travel_topics]
HELD_BUILDERS = [language_topics, possession_topics, appearance_topics, education_topics]
# Attributes that imply things about each other: no cross-topic "neutral" pairs between them.
LINKED = {frozenset(p) for p in [("age", "children"), ("age", "marital"), ("age", "job"), ("age", "education"),
                                 ("marital", "children"), ("diet", "drink"), ("pets", "fear"),
                                 ("activity", "ability"), ("ability", "fear"), ("travel", "country"),
                                 ("country", "setting"), ("dwelling", "setting"), ("driving", "colour"),
                                 ("activity", "exercise"), ("pets", "activity"), ("job", "education"),
                                 ("fear", "activity"), ("season", "activity")]}


# ---------------------------------------------------------------------------------------------------
# Surface variation: chit-chat wrappers, case, contractions.

PREFIXES = ["", "", "", "", "Well, ", "Honestly, ", "Oh, ", "Haha, ", "To be honest, ", "Actually, ", "You know, ",
            "Yes! ", "Hmm, ", "Ha, ", "Oh wow, ", "Funny you ask. ", "Good question. "]
SUFFIXES = ["", "", "", "", " What about you?", " How about you?", " It's a long story.", " Do you?",
            " Anyway, how was your day?", " Have you ever tried it?", " I think about it a lot.", " :)"]
CONTRACTIONS = [("I am ", "I'm "), ("do not ", "don't "), ("I have been ", "I've been "), ("cannot ", "can't "),
                ("I have never ", "I've never "), ("is not ", "isn't "), ("I would ", "I'd ")]


def surface(text: str, rng: random.Random, reply: bool) -> str:
    for a, b in CONTRACTIONS:
        if a in text and rng.random() < 0.4:
            text = text.replace(a, b)
    if reply:
        pre, suf = rng.choice(PREFIXES), rng.choice(SUFFIXES)
        if pre and text[:2] != "I " and text[:2] != "I'":
            text = text[0].lower() + text[1:]
        text = pre + text + suf
    r = rng.random()
    if r < 0.15:
        text = text.lower()
    elif r < 0.22:
        text = text.rstrip(".")
    return text


# ---------------------------------------------------------------------------------------------------
# Pair sampling.


def topic_pairs(topics: list[Topic], rng: random.Random, n: int, source: str) -> list[dict]:
    """n pairs from within topics, balanced over the three labels as far as the topics allow."""
    want = {"contradiction": n * 4 // 10, "entailment": n * 2 // 10, "neutral": n - n * 4 // 10 - n * 2 // 10}
    got = {k: [] for k in want}
    tries = 0
    while any(len(got[k]) < want[k] for k in want) and tries < n * 60:
        tries += 1
        t = rng.choice(topics)
        facts = [s for s in t.statements if s.role in ("any", "fact")]
        replies = [s for s in t.statements if s.role in ("any", "reply")]
        if not facts or not replies:
            continue
        p, h = rng.choice(facts), rng.choice(replies)
        if p is h:
            continue
        y = label(t, p, h)
        if len(got[y]) >= want[y]:
            continue
        pt, ht = rng.choice(p.texts), rng.choice(h.texts)
        if pt.lower() == ht.lower():
            continue
        got[y].append({"premise": surface(pt, rng, False), "hypothesis": surface(ht, rng, True), "label": y,
                       "source": f"{source}:{t.name}"})
        # The same pair the other way round (the reply as premise), labelled by the logic for that order.
        if rng.random() < 0.5 and p.role == "any" and h.role == "any":
            y2 = label(t, h, p)
            if len(got[y2]) < want[y2]:
                got[y2].append({"premise": surface(ht, rng, False), "hypothesis": surface(pt, rng, True),
                                "label": y2, "source": f"{source}:{t.name}:rev"})
    out = [x for k in got for x in got[k]]
    rng.shuffle(out)
    return out


def cross_pairs(topics: list[Topic], rng: random.Random, n: int, source: str) -> list[dict]:
    """Fact of one attribute, reply of another: neutral (linked attributes excepted)."""
    out = []
    while len(out) < n:
        a, b = rng.choice(topics), rng.choice(topics)
        if a.name == b.name or frozenset((a.name, b.name)) in LINKED:
            continue
        p = rng.choice([s for s in a.statements if s.role in ("any", "fact")])
        h = rng.choice([s for s in b.statements if s.role in ("any", "reply")])
        out.append({"premise": surface(rng.choice(p.texts), rng, False),
                    "hypothesis": surface(rng.choice(h.texts), rng, True), "label": "neutral",
                    "source": f"{source}:{a.name}+{b.name}"})
    return out


# ---------------------------------------------------------------------------------------------------
# Synthetic-Persona-Chat material.

STOP = set("""i me my mine myself a an the and or but to of in on at for with from by is am are was were be been
being have has had do does did not no very really so just also too it its this that these those there here
like love enjoy lot lots much many some any all one you your we our they them their he she his her about
what when where who how as if than then out up down into over can will would could should""".split())


def content_words(s: str) -> set[str]:
    return {w for w in re.findall(r"[a-z']+", s.lower()) if w not in STOP and len(w) > 2}


NEGATIONS = [
    (r"^I am (not )?(a|an) (.+)$", lambda m: None if m.group(1) else f"I am not {m.group(2)} {m.group(3)}"),
    (r"^I am (?!not )(.+)$", lambda m: f"I am not {m.group(1)}"),
    (r"^I have (?!no |never |not )(a |an |two |three )?(.+)$", lambda m: f"I don't have any {m.group(2)}"),
    (r"^I (love|like|enjoy) (.+)$", lambda m: f"I {random.Random(m.group(2)).choice(['hate', 'cannot stand', 'really dislike'])} {m.group(2)}"),
    (r"^I (hate|dislike) (.+)$", lambda m: f"I love {m.group(2)}"),
    (r"^I (do not|don't) (.+)$", lambda m: f"I {m.group(2)} all the time"),
    (r"^I can (?!not )(.+)$", lambda m: f"I can't {m.group(1)}"),
    (r"^I (cannot|can't) (.+)$", lambda m: f"I can {m.group(2)} easily"),
    (r"^I live (.+)$", lambda m: f"I have never lived {m.group(1)}"),
    (r"^I was (?!not )(.+)$", lambda m: f"I was never {m.group(1)}"),
    (r"^I (work|play|drive|volunteer|go|read|walk|spend|own|collect|cook|run|ride|grow|make|watch|listen|write|"
     r"sing|paint|teach|study|travel|swim) (.+)$", lambda m: f"I never {m.group(1)} {m.group(2)}"),
    (r"^My favou?rite (\w+) is (.+)$", None),  # handled by swap_favourite
]


def negate(sentence: str) -> str | None:
    s = sentence.strip().rstrip(".!")
    for pat, fn in NEGATIONS:
        m = re.match(pat, s, flags=re.IGNORECASE)
        if m and fn:
            out = fn(m)
            return None if out is None else out + "."
        if m:
            return None
    return None


def persona_chat(held: bool, rng: random.Random) -> list[dict]:
    path = os.path.join(data_dir(), "persona_chat_synthetic", "Synthetic-Persona-Chat_valid.csv")
    with open(path, encoding="utf-8", newline="") as f:
        rows = list(csv.DictReader(f))
    rows = [r for i, r in enumerate(rows) if (i % 5 == 4) == held]
    convs = []
    for r in rows:
        personas = {1: [s.strip() for s in r["user 1 personas"].split("\n") if s.strip()],
                    2: [s.strip() for s in r["user 2 personas"].split("\n") if s.strip()]}
        turns = {1: [], 2: []}
        for line in r["Best Generated Conversation"].split("\n"):
            m = re.match(r"\s*User ([12]):\s*(.+)", line)
            if m:
                turns[int(m.group(1))].append(m.group(2).strip())
        convs.append((personas, turns))
    out = []
    favourites: dict[str, list[str]] = {}
    for personas, _ in convs:
        for ps in personas.values():
            for s in ps:
                m = re.match(r"^My favou?rite (\w+) is (.+?)\.?$", s, flags=re.IGNORECASE)
                if m:
                    favourites.setdefault(m.group(1).lower(), []).append(m.group(2))
    for ci, (personas, turns) in enumerate(convs):
        for u in (1, 2):
            for s in personas[u]:
                neg = negate(s)
                if neg:
                    out.append({"premise": s, "hypothesis": surface(neg, rng, True), "label": "contradiction",
                                "source": "personachat:negation"})
                m = re.match(r"^My favou?rite (\w+) is (.+?)\.?$", s, flags=re.IGNORECASE)
                if m:
                    others = [v for v in favourites.get(m.group(1).lower(), []) if v.lower() != m.group(2).lower()]
                    if others:
                        out.append({"premise": s, "hypothesis": surface(
                            f"My favorite {m.group(1).lower()} is {rng.choice(others)}.", rng, True),
                            "label": "contradiction", "source": "personachat:favourite"})
                cw = content_words(s)
                own = [t for t in turns[u] if len(content_words(t) & cw) >= 1 and "?" not in t]
                if own:
                    t = rng.choice(own)
                    shared = len(content_words(t) & cw) / max(1, len(cw))
                    out.append({"premise": s, "hypothesis": t, "label": "entailment" if shared >= 0.6 else "neutral",
                                "source": "personachat:own"})
                other_p, other_t = convs[(ci + len(convs) // 2) % len(convs)]
                cand = [t for t in other_t[u] if not (content_words(t) & cw) and len(t) > 15]
                if cand:
                    out.append({"premise": s, "hypothesis": rng.choice(cand), "label": "neutral",
                                "source": "personachat:other"})
    for personas, turns in convs:
        for u in (1, 2):
            said = [t for t in turns[u] if "?" not in t and len(t.split()) >= 4]
            for i in range(len(said)):
                for j in (i + 1, i + 2):
                    if j < len(said):
                        out.append({"premise": said[i], "hypothesis": said[j], "label": "neutral",
                                    "source": "personachat:same-speaker"})
    rng.shuffle(out)
    # Negations of one sentence are easy and many; keep each kind to a share of the whole.
    cap = {"personachat:negation": 3000, "personachat:own": 6000, "personachat:other": 2500,
           "personachat:favourite": 1000, "personachat:same-speaker": 8000}
    scale = 0.25 if held else 1.0
    kept, seen = [], {}
    for p in out:
        k = p["source"]
        if seen.get(k, 0) < cap[k] * scale:
            kept.append(p)
            seen[k] = seen.get(k, 0) + 1
    return kept


def generate(held: bool, n_topic: int, n_cross: int) -> list[dict]:
    rng = random.Random(SEED + int(held))
    if held:
        topics = [t for b in HELD_BUILDERS for t in b(rng, False)] + [t for b in TRAIN_BUILDERS for t in b(rng, True)]
    else:
        topics = [t for b in TRAIN_BUILDERS for t in b(rng, False)]
    for t in topics:  # every premise must hold somewhere
        for s in t.statements:
            if not any(s.holds(w) for w in t.worlds):
                raise ValueError(f"{t.name}: {s.texts[0]} holds in no world")
    src = "persona-heldout" if held else "persona"
    pairs = topic_pairs(topics, rng, n_topic, src) + cross_pairs(topics, rng, n_cross, src)
    pairs += persona_chat(held, rng)
    rng.shuffle(pairs)
    return pairs


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--out", required=True)
    ap.add_argument("--train-pairs", type=int, default=24000, help="within-attribute pairs for training")
    ap.add_argument("--train-cross", type=int, default=5000, help="cross-attribute (neutral) pairs for training")
    ap.add_argument("--heldout-pairs", type=int, default=2400)
    ap.add_argument("--heldout-cross", type=int, default=600)
    args = ap.parse_args()
    os.makedirs(args.out, exist_ok=True)
    for name, held, n, c in (("train", False, args.train_pairs, args.train_cross),
                             ("heldout", True, args.heldout_pairs, args.heldout_cross)):
        pairs = generate(held, n, c)
        with open(os.path.join(args.out, f"{name}.jsonl"), "w", encoding="utf-8") as f:
            for p in pairs:
                f.write(json.dumps(p, ensure_ascii=False) + "\n")
        counts = {k: sum(p["label"] == k for p in pairs) for k in ("contradiction", "entailment", "neutral")}
        print(name, len(pairs), counts)


if __name__ == "__main__":
    main()
