"""Make the small tokenizers and the parity sentences that nli's tokenizer tests use.

No public model's tokenizer.json can be downloaded on the machines this project is built on, so this
script trains one small tokenizer of each family that public NLI cross-encoders use, on open NLI text
(shared/data: SNLI dev, MultiNLI dev subset), and lays each out exactly as the Hugging Face converters do
for the public models:

* wordpiece/  BERT-uncased layout (BertTokenizerFast): BertNormalizer, BertPreTokenizer, WordPiece,
              [CLS] A [SEP] B [SEP] with token types 0/1; as MiniLM and BERT NLI cross-encoders.
* bpe/        RoBERTa layout (RobertaTokenizerFast): byte-level BPE, <s> A </s></s> B </s>, trimmed
              offsets; as RoBERTa and BART NLI models.
* unigram/    DeBERTa-v3 layout (DebertaV2TokenizerFast converted from a SentencePiece unigram model):
              Precompiled normaliser, Metaspace, [CLS] A [SEP] B [SEP].

It also writes tokenizer/testdata/parity/pairs.jsonl: premise/hypothesis pairs from SNLI test, MultiNLI (every
row with non-ASCII text first) and Breaking NLI, plus a few strings chosen to stress normalisation.

Needs: tokenizers, transformers, sentencepiece, protobuf (scripts/train/requirements.txt). Run once:
    python scripts/reference/make_tokenizers.py
"""
from __future__ import annotations

import json
import os
import sys
import tempfile

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.normpath(os.path.join(HERE, "..", ".."))
sys.path.insert(0, os.path.join(ROOT, "scripts", "train"))

import nli_data  # noqa: E402

OUT = os.path.join(ROOT, "tokenizer", "testdata", "tokenizers")
PARITY = os.path.join(ROOT, "tokenizer", "testdata", "parity", "pairs.jsonl")
VOCAB = 3000

# Strings that exercise what open NLI text rarely has: accents that BERT-uncased strips, characters that
# NFKC folds, CJK (split per character by BERT), emoji (unknown to small vocabularies), combining marks,
# runs of spaces, tabs and control characters.
STRESS = [
    ("I grew up in Zürich.", "My brother is a frère of the abbey."),
    ("The café serves crème brûlée.", "She is naïve about the coöperative."),
    ("He paid ¥500 for ｆｕｌｌｗｉｄｔｈ letters.", "The ﬁnal ﬂight left at 9½ o'clock."),
    ("我住在海边。", "I have never seen the sea 🌊 in my life!"),
    ("Zoë's  dog   barks.", "The dog\tis\tquiet."),
    ("A man—tall, thin—waved.", "Nobody waved at all…"),
    ("e\u0301 is an e with a combining accent.", "The word is re\u0301sume\u0301."),
    ("I live in Αθήνα and speak Ελληνικά.", "Москва is my home town."),
    ("It costs 3.50 dollars, i.e. cheap.", "Dr. Ada lives on St. Mary's Rd."),
    ("«Bonjour», dit-il.", "He said \u201chello\u201d and left\u2026"),
]


def corpus_lines() -> list[str]:
    lines = []
    d = os.path.join(nli_data.data_dir(), "snli")
    for name in ("s1.dev", "s2.dev"):
        with open(os.path.join(d, name), encoding="utf-8") as f:
            lines += [nli_data.detok(x) for x in f]
    for p in nli_data.mnli(held_out=False) + nli_data.mnli(held_out=True):
        lines += [p.premise, p.hypothesis]
    return sorted(set(lines))  # sorted: the trainers see the same input on every run


def make_wordpiece(lines, tmp):
    """bert-base-uncased's tokenizer.json layout, as BertTokenizerFast writes it."""
    from tokenizers import BertWordPieceTokenizer, decoders, normalizers, pre_tokenizers, processors

    t = BertWordPieceTokenizer(lowercase=True, strip_accents=None)
    t.train_from_iterator(lines, vocab_size=VOCAB, min_frequency=2,
                          special_tokens=["[PAD]", "[UNK]", "[CLS]", "[SEP]", "[MASK]"])
    tk = t._tokenizer
    tk.normalizer = normalizers.BertNormalizer(clean_text=True, handle_chinese_chars=True,
                                               strip_accents=None, lowercase=True)
    tk.pre_tokenizer = pre_tokenizers.BertPreTokenizer()
    tk.post_processor = processors.TemplateProcessing(
        single="[CLS]:0 $A:0 [SEP]:0", pair="[CLS]:0 $A:0 [SEP]:0 $B:1 [SEP]:1",
        special_tokens=[("[CLS]", tk.token_to_id("[CLS]")), ("[SEP]", tk.token_to_id("[SEP]"))])
    tk.decoder = decoders.WordPiece(prefix="##")
    return tk


def make_bpe(lines, tmp):
    """roberta-base's tokenizer.json layout, as RobertaTokenizerFast writes it."""
    from tokenizers import ByteLevelBPETokenizer, decoders, pre_tokenizers, processors

    t = ByteLevelBPETokenizer(add_prefix_space=False, trim_offsets=True)
    t.train_from_iterator(lines, vocab_size=VOCAB, min_frequency=2,
                          special_tokens=["<s>", "<pad>", "</s>", "<unk>", "<mask>"])
    tk = t._tokenizer
    tk.normalizer = None
    tk.pre_tokenizer = pre_tokenizers.ByteLevel(add_prefix_space=False, trim_offsets=True)
    tk.post_processor = processors.RobertaProcessing(
        ("</s>", tk.token_to_id("</s>")), ("<s>", tk.token_to_id("<s>")),
        trim_offsets=True, add_prefix_space=False)
    tk.decoder = decoders.ByteLevel()
    return tk


def make_unigram(lines, tmp):
    """DeBERTa-v3's tokenizer.json layout: a SentencePiece unigram model run through transformers'
    DebertaV2Converter, as DebertaV2TokenizerFast does on first load."""
    import sentencepiece as spm
    from transformers.convert_slow_tokenizer import DebertaV2Converter

    corpus = os.path.join(tmp, "corpus.txt")
    with open(corpus, "w", encoding="utf-8") as f:
        f.write("\n".join(lines))
    prefix = os.path.join(tmp, "spm")
    # Special-token ids as in DeBERTa-v3's spm.model: [PAD]=0, [CLS]=1, [SEP]=2, [UNK]=3.
    spm.SentencePieceTrainer.train(
        input=corpus, model_prefix=prefix, vocab_size=VOCAB, model_type="unigram",
        character_coverage=0.9995, pad_id=0, bos_id=1, eos_id=2, unk_id=3,
        pad_piece="[PAD]", bos_piece="[CLS]", eos_piece="[SEP]", unk_piece="[UNK]",
        user_defined_symbols=["[MASK]"], num_threads=1, minloglevel=2,
    )
    sp = spm.SentencePieceProcessor(model_file=prefix + ".model")

    class Original:  # the attributes DebertaV2Converter reads from a slow DebertaV2Tokenizer
        vocab_file = prefix + ".model"
        split_by_punct = False
        do_lower_case = False
        add_prefix_space = True
        legacy = True

        @staticmethod
        def convert_tokens_to_ids(tok):
            return sp.piece_to_id(tok)

    return DebertaV2Converter(Original()).converted()


def write_parity_pairs():
    pairs = []
    for p in nli_data.snli("test")[:150]:
        pairs.append(p)
    mn = nli_data.mnli(held_out=False) + nli_data.mnli(held_out=True)
    non_ascii = [p for p in mn if any(ord(c) > 127 for c in p.premise + p.hypothesis)]
    pairs += non_ascii + [p for p in mn if p not in non_ascii][: 100 - len(non_ascii)]
    pairs += nli_data.breaking(held_out=True)[::90][:50]
    os.makedirs(os.path.dirname(PARITY), exist_ok=True)
    with open(PARITY, "w", encoding="utf-8") as f:
        for p in pairs:
            f.write(json.dumps({"premise": p.premise, "hypothesis": p.hypothesis, "source": p.source},
                               ensure_ascii=False) + "\n")
        for i, (a, b) in enumerate(STRESS):
            f.write(json.dumps({"premise": a, "hypothesis": b, "source": f"stress:{i + 1}"},
                               ensure_ascii=False) + "\n")


def main():
    import sentencepiece as spm

    spm.set_random_generator_seed(7)
    lines = corpus_lines()
    for name, make in (("wordpiece", make_wordpiece), ("bpe", make_bpe), ("unigram", make_unigram)):
        with tempfile.TemporaryDirectory() as tmp:
            tk = make(lines, tmp)
            d = os.path.join(OUT, name)
            os.makedirs(d, exist_ok=True)
            tk.save(os.path.join(d, "tokenizer.json"))
            print(name, tk.get_vocab_size(), "tokens ->", d)
    write_parity_pairs()


if __name__ == "__main__":
    main()
