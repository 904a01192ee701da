"""Regenerate the Brackwater Guides demo vector set (deterministic).

Brackwater Guides is an invented publisher of coastal travel guides. This script writes a guidebook-style corpus
from our own templates and word lists (lodging, food, weather, transport, activities, invented harbour towns and
their regions, real countries and capitals), trains gensim's Word2Vec on it with a fixed seed and one worker, and
writes:

- ``brackwater.vec.gz``: the vectors, word2vec text format, gzip-compressed;
- ``brackwater-analogies.txt``: analogy questions in the standard ``: section`` format, one family a section;
- ``brackwater-ft.bin`` (with ``--fasttext``): a fastText model of the same corpus (gensim's FastText, character
  3- to 6-grams in 10,000 buckets), in the fastText ``.bin`` format, so that words the corpus never had
  (``harbourfront``, misspellings) get vectors from their character n-grams;
- ``brackwater-pairs.tsv`` is hand-written (scores by us) and is not touched here.

Relation families: town -> region, country -> capital, country -> nationality, singular -> plural, verb -> past
tense, adjective -> comparative, adjective -> superlative, role nouns by gender.

The corpus is built so that each word's contexts combine two parts: what it is (its pair's own signature words,
shared by both members of a pair, plus its topic's words) and which side of the relation it is on (role markers
shared by every pair of the family). That is the structure vector offsets recover.

Usage: python -m wordkin.demo_vectors.generate [--out DIR] [--corpus FILE]
"""

from __future__ import annotations

import argparse
import gzip
import random
from pathlib import Path

HERE = Path(__file__).resolve().parent
SEED = 20261201

COUNTRIES = [  # (country, capital, nationality adjective): real, from general knowledge
    ("france", "paris", "french"),
    ("italy", "rome", "italian"),
    ("spain", "madrid", "spanish"),
    ("portugal", "lisbon", "portuguese"),
    ("greece", "athens", "greek"),
    ("norway", "oslo", "norwegian"),
    ("sweden", "stockholm", "swedish"),
    ("finland", "helsinki", "finnish"),
    ("denmark", "copenhagen", "danish"),
    ("ireland", "dublin", "irish"),
    ("germany", "berlin", "german"),
    ("poland", "warsaw", "polish"),
    ("austria", "vienna", "austrian"),
    ("hungary", "budapest", "hungarian"),
    ("turkey", "ankara", "turkish"),
    ("egypt", "cairo", "egyptian"),
    ("japan", "tokyo", "japanese"),
    ("china", "beijing", "chinese"),
    ("russia", "moscow", "russian"),
    ("peru", "lima", "peruvian"),
    ("chile", "santiago", "chilean"),
    ("canada", "ottawa", "canadian"),
    ("mexico", "mexico_city", "mexican"),
    ("kenya", "nairobi", "kenyan"),
    ("iceland", "reykjavik", "icelandic"),
    ("croatia", "zagreb", "croatian"),
    ("estonia", "tallinn", "estonian"),
    ("latvia", "riga", "latvian"),
    ("thailand", "bangkok", "thai"),
    ("vietnam", "hanoi", "vietnamese"),
]

NOUNS = {  # topic -> (singular, plural)
    "lodging": [
        ("hotel", "hotels"),
        ("inn", "inns"),
        ("guesthouse", "guesthouses"),
        ("hostel", "hostels"),
        ("cottage", "cottages"),
        ("room", "rooms"),
        ("suite", "suites"),
        ("campsite", "campsites"),
        ("cabin", "cabins"),
        ("villa", "villas"),
        ("bed", "beds"),
        ("balcony", "balconies"),
    ],
    "food": [
        ("oyster", "oysters"),
        ("mussel", "mussels"),
        ("crab", "crabs"),
        ("lobster", "lobsters"),
        ("pie", "pies"),
        ("cake", "cakes"),
        ("chowder", "chowders"),
        ("scone", "scones"),
        ("sardine", "sardines"),
        ("prawn", "prawns"),
        ("tart", "tarts"),
        ("loaf", "loaves"),
    ],
    "transport": [
        ("ferry", "ferries"),
        ("bus", "buses"),
        ("train", "trains"),
        ("boat", "boats"),
        ("taxi", "taxis"),
        ("tram", "trams"),
        ("bicycle", "bicycles"),
        ("yacht", "yachts"),
        ("platform", "platforms"),
        ("ticket", "tickets"),
        ("timetable", "timetables"),
        ("route", "routes"),
    ],
    "activities": [
        ("walk", "walks"),
        ("swim", "swims"),
        ("tour", "tours"),
        ("hike", "hikes"),
        ("cruise", "cruises"),
        ("museum", "museums"),
        ("gallery", "galleries"),
        ("festival", "festivals"),
        ("market", "markets"),
        ("beach", "beaches"),
        ("trail", "trails"),
        ("lighthouse", "lighthouses"),
    ],
}

VERBS = [  # (present, past): activities and travel
    ("walk", "walked"),
    ("sail", "sailed"),
    ("swim", "swam"),
    ("climb", "climbed"),
    ("visit", "visited"),
    ("arrive", "arrived"),
    ("leave", "left"),
    ("eat", "ate"),
    ("drink", "drank"),
    ("sleep", "slept"),
    ("book", "booked"),
    ("pay", "paid"),
    ("ride", "rode"),
    ("drive", "drove"),
    ("fly", "flew"),
    ("explore", "explored"),
    ("fish", "fished"),
    ("row", "rowed"),
    ("paddle", "paddled"),
    ("cycle", "cycled"),
    ("dine", "dined"),
    ("stay", "stayed"),
    ("wander", "wandered"),
    ("camp", "camped"),
    ("dive", "dived"),
    ("see", "saw"),
    ("find", "found"),
    ("buy", "bought"),
    ("catch", "caught"),
    ("take", "took"),
]

ADJECTIVES = [  # (base, comparative, superlative): weather and places
    ("warm", "warmer", "warmest"),
    ("cold", "colder", "coldest"),
    ("wet", "wetter", "wettest"),
    ("dry", "drier", "driest"),
    ("windy", "windier", "windiest"),
    ("sunny", "sunnier", "sunniest"),
    ("calm", "calmer", "calmest"),
    ("rough", "rougher", "roughest"),
    ("quiet", "quieter", "quietest"),
    ("busy", "busier", "busiest"),
    ("cheap", "cheaper", "cheapest"),
    ("small", "smaller", "smallest"),
    ("large", "larger", "largest"),
    ("old", "older", "oldest"),
    ("new", "newer", "newest"),
    ("clean", "cleaner", "cleanest"),
    ("steep", "steeper", "steepest"),
    ("deep", "deeper", "deepest"),
    ("long", "longer", "longest"),
    ("short", "shorter", "shortest"),
    ("bright", "brighter", "brightest"),
    ("cool", "cooler", "coolest"),
    ("fresh", "fresher", "freshest"),
    ("safe", "safer", "safest"),
]

ROLES = [  # (male, female) role nouns of the trade
    ("waiter", "waitress"),
    ("host", "hostess"),
    ("steward", "stewardess"),
    ("landlord", "landlady"),
    ("actor", "actress"),
    ("fisherman", "fisherwoman"),
    ("prince", "princess"),
    ("duke", "duchess"),
    ("king", "queen"),
    ("husband", "wife"),
    ("brother", "sister"),
    ("father", "mother"),
    ("son", "daughter"),
    ("uncle", "aunt"),
    ("nephew", "niece"),
    ("boy", "girl"),
    ("man", "woman"),
    ("gentleman", "lady"),
    ("groom", "bride"),
    ("ferryman", "ferrywoman"),
    ("boatman", "boatwoman"),
    ("barman", "barmaid"),
]

TOPIC_WORDS = {
    "lodging": "night stay booking breakfast reception view sea pillow key checkout comfy clean quiet".split(),
    "food": "menu dinner lunch kitchen chef fresh grilled salted sauce plate harbourside taste supper".split(),
    "transport": "depart arrive station pier schedule fare seat journey crossing delay stop connection".split(),
    "activities": "morning afternoon guide family children scenic coastal route views entry open season".split(),
    "weather": "rain sun wind fog storm sky forecast temperature summer winter spring autumn breeze".split(),
    "places": "coast cliffs bay harbour quay headland estuary dunes cove shore inlet peninsula".split(),
    "world": "abroad europe travel flight visa embassy language border currency passport tourists".split(),
    "people": "family staff crew owner welcome friendly service local team household village".split(),
}

ROLE_MARKERS = {
    "singular": "a one this single each another".split(),
    "plural": "many several these two three dozens".split(),
    "present": "today usually often always every now".split(),
    "past": "yesterday last ago once earlier previously".split(),
    "base": "very quite so rather fairly too".split(),
    "comparative": "than even much far slightly bit".split(),
    "superlative": "the most ever of_all by_far whole".split(),
    "male": "he his him mr himself sir".split(),
    "female": "she her hers mrs herself madam".split(),
    "country": "country nation visit national across beyond".split(),
    "capital": "capital city downtown metropolis avenue cathedral".split(),
    "nationality": "cuisine people speak style traditional customs".split(),
    "town": "town village harbour fishing quayside little".split(),
    "region": "region province county district inland across".split(),
}

SYL_A = "bra kel mar sal pen tor wen dun cor hal lin ros fen gar mor tre bel car dor fal han pol ker lan".split()
SYL_B = "ck th rr wy ll nn st rn sh ch nd lt rd mb".split()
SYL_C = "water mere ford by stow haven wick combe mouth port ness holm stead ton ley sey well".split()


def invent(rng: random.Random, taken: set[str], parts: int = 2) -> str:
    while True:
        v = "aeiou"
        w = rng.choice(SYL_A) + (rng.choice(v) + rng.choice(SYL_B) if parts > 2 else "") + rng.choice(SYL_C)
        if w not in taken:
            taken.add(w)
            return w


def build_world(rng: random.Random) -> dict:
    taken: set[str] = set()
    for group in (NOUNS.values(),):
        for pairs in group:
            for a, b in pairs:
                taken |= {a, b}
    regions = []
    for _ in range(90):
        region = invent(rng, taken, 3)
        marks = [invent(rng, taken, 3) for _ in range(4)]  # the region's own rivers, hills and capes
        towns = []
        for _ in range(8):
            town = invent(rng, taken, 2 + rng.randint(0, 1))
            feats = [invent(rng, taken, 3) for _ in range(5)]  # the town's inn, beach, boat, dish, guide
            towns.append((town, feats))
        regions.append((region, marks, towns))
    return {"regions": regions}


def signature(rng: random.Random, pool: list[str], n: int = 4) -> list[str]:
    return rng.sample(pool, n)


def sentence(rng: random.Random, target: str, sig: list[str], topic: list[str], markers: list[str]) -> str:
    """A guidebook-like line: the target among its pair's signature, its topic and its side's markers."""
    words = [
        target,
        rng.choice(sig),
        rng.choice(sig),
        rng.choice(topic),
        rng.choice(markers),
        rng.choice(markers),
    ]
    glue = rng.choice(["with", "and", "near", "for", "on", "by", "at", "in"])
    rng.shuffle(words)
    words.insert(rng.randint(1, len(words) - 1), glue)
    return " ".join(words)


def corpus(rng: random.Random, world: dict, reps: int = 40) -> list[str]:
    out: list[str] = []
    M = ROLE_MARKERS
    fams: list[tuple[str, list[tuple[str, ...]], list[str], list[str]]] = []
    for topic, pairs in NOUNS.items():
        fams.append(("plural", pairs, TOPIC_WORDS[topic], ["singular", "plural"]))
    fams.append(("past", VERBS, TOPIC_WORDS["activities"], ["present", "past"]))
    fams.append(("degree", ADJECTIVES, TOPIC_WORDS["weather"], ["base", "comparative", "superlative"]))
    fams.append(("gender", ROLES, TOPIC_WORDS["people"], ["male", "female"]))
    fams.append(("world", COUNTRIES, TOPIC_WORDS["world"], ["country", "capital", "nationality"]))
    for _name, pairs, topic, sides in fams:
        pool = topic + [w for p in pairs for w in p]
        for tup in pairs:
            base = signature(rng, topic, 2)
            for word, side in zip(tup, sides, strict=True):
                # Each member's contexts hold the pair's other members: that is the pair's identity.
                sig = base + [w for w in tup if w != word]
                for _ in range(reps * 3 // 2):
                    out.append(sentence(rng, word, sig, topic, M[side]))
            _ = pool
    places = TOPIC_WORDS["places"]
    for region, marks, towns in world["regions"]:
        for _ in range(reps * 2):
            out.append(sentence(rng, region, marks, places, M["region"]))
        for town, feats in towns:
            for _ in range(reps):
                out.append(sentence(rng, town, marks, places, M["town"]))
            for _ in range(reps // 2):
                out.append(sentence(rng, town, feats, places + marks[:1], M["town"]))
            for f in feats:
                for _ in range(8):
                    out.append(
                        sentence(
                            rng,
                            f,
                            [town, town, *marks[:2]],
                            TOPIC_WORDS[rng.choice(list(NOUNS))],
                            ["the", "our", "its"],
                        )
                    )
    rng.shuffle(out)
    return out


def analogies(rng: random.Random, world: dict, per_family: int = 200) -> list[str]:
    fam: dict[str, list[tuple[str, str]]] = {
        "town-region": [(t, r) for r, _m, towns in world["regions"] for t, _f in towns[:2]],
        "country-capital": [(c, k) for c, k, _n in COUNTRIES],
        "country-nationality": [(c, n) for c, _k, n in COUNTRIES],
        "singular-plural": [p for pairs in NOUNS.values() for p in pairs],
        "verb-past": list(VERBS),
        "adjective-comparative": [(a, c) for a, c, _s in ADJECTIVES],
        "adjective-superlative": [(a, s) for a, _c, s in ADJECTIVES],
        "role-gender": list(ROLES),
    }
    lines = []
    for name, pairs in fam.items():
        lines.append(f": {name}")
        qs = [(a, b, c, d) for (a, b) in pairs for (c, d) in pairs if a != c and b != d]
        rng.shuffle(qs)
        lines.extend(" ".join(q) for q in qs[:per_family])
    return lines


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", type=Path, default=HERE)
    ap.add_argument("--corpus", type=Path, help="also write the corpus here")
    ap.add_argument("--epochs", type=int, default=12)
    ap.add_argument("--fasttext", action="store_true", help="also train and write brackwater-ft.bin")
    args = ap.parse_args()
    from gensim.models import Word2Vec

    rng = random.Random(SEED)
    world = build_world(rng)
    lines = corpus(rng, world)
    if args.corpus:
        args.corpus.write_text("\n".join(lines) + "\n")
    sents = [ln.split() for ln in lines]
    model = Word2Vec(
        sents,
        vector_size=48,
        window=6,
        min_count=3,
        sg=0,
        negative=10,
        sample=1e-3,
        epochs=args.epochs,
        workers=1,
        seed=SEED % (2**31),
    )
    args.out.mkdir(parents=True, exist_ok=True)
    tmp = args.out / "brackwater.vec"
    model.wv.save_word2vec_format(str(tmp), binary=False)
    data = tmp.read_bytes()
    tmp.unlink()
    # mtime=0 and no file name in the gzip header keep the .gz byte-identical across runs and folders.
    (args.out / "brackwater.vec.gz").write_bytes(gzip.compress(data, compresslevel=9, mtime=0))
    (args.out / "brackwater-analogies.txt").write_text("\n".join(analogies(random.Random(SEED + 1), world)) + "\n")
    print(f"{len(model.wv)} words, {sum(len(s) for s in sents)} tokens")
    if args.fasttext:
        write_fasttext(sents, args.out / "brackwater-ft.bin", args.epochs)


def write_fasttext(sents: list[list[str]], out: Path, epochs: int) -> None:
    """The same corpus through gensim's FastText, saved in fastText's own .bin format."""
    from gensim.models.fasttext import FastText, save_facebook_model

    model = FastText(
        sents,
        vector_size=32,
        window=6,
        min_count=3,
        sg=0,
        negative=10,
        sample=1e-3,
        epochs=epochs,
        workers=1,
        seed=SEED % (2**31),
        min_n=3,
        max_n=6,
        bucket=10_000,
    )
    save_facebook_model(model, str(out))
    print(f"{out.name}: {len(model.wv)} words, {out.stat().st_size:,} bytes")


if __name__ == "__main__":
    main()
