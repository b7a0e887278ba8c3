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

and, for `gainsay align`, the layouts of today's chat-model generators:

* splitbpe/       Llama 3 layout: a regex Split pre-tokenizer with look-ahead (the GPT-4-style
                  pattern), then ByteLevel without its own regex, BPE with ignore_merges, a
                  <|begin_of_text|> template and ByteLevel offsets left untrimmed.
* splitbpe-nfc/   Qwen2 layout: NFC normaliser, the same kind of Split (single digits), BPE without
                  ignore_merges, no special tokens around sequences.
* spbpe/          Llama 2 layout (legacy SentencePiece conversion): Prepend("▁") and Replace(" ", "▁")
                  normalisers, no pre-tokenizer, BPE with byte_fallback and fuse_unk, <s> template,
                  the Replace/ByteFallback/Fuse/Strip decoder.
* metaspace-bpe/  Mistral layout (non-legacy conversion): Metaspace with prepend_scheme "first" and
                  split false, BPE with byte_fallback.

The BPE ones learn merges with a pre-tokenizer that keeps merges inside words, as SentencePiece does,
and are saved with the layout above; their alphabets are limited so that rare characters fall back to
byte tokens.

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


LLAMA3_PATTERN = (r"(?i:'s|'t|'re|'ve|'m|'ll|'d)|[^\r\n\p{L}\p{N}]?\p{L}+|\p{N}{1,3}| ?[^\s\p{L}\p{N}]+[\r\n]*"
                  r"|\s*[\r\n]+|\s+(?!\S)|\s+")
QWEN2_PATTERN = (r"(?i:'s|'t|'re|'ve|'m|'ll|'d)|[^\r\n\p{L}\p{N}]?\p{L}+|\p{N}| ?[^\s\p{L}\p{N}]+[\r\n]*"
                 r"|\s*[\r\n]+|\s+(?!\S)|\s+")


def _byte_level_bpe(lines, pattern, specials, ignore_merges):
    from tokenizers import Regex, Tokenizer, models, pre_tokenizers, trainers

    tk = Tokenizer(models.BPE(ignore_merges=ignore_merges))
    tk.pre_tokenizer = pre_tokenizers.Sequence([
        pre_tokenizers.Split(Regex(pattern), behavior="isolated", invert=False),
        pre_tokenizers.ByteLevel(add_prefix_space=False, trim_offsets=True, use_regex=False),
    ])
    tk.train_from_iterator(lines, trainers.BpeTrainer(
        vocab_size=VOCAB, min_frequency=2, special_tokens=specials,
        initial_alphabet=pre_tokenizers.ByteLevel.alphabet(), show_progress=False))
    return tk


def make_splitbpe(lines, tmp):
    """Llama 3's tokenizer.json layout."""
    from tokenizers import decoders, processors

    tk = _byte_level_bpe(lines, LLAMA3_PATTERN, ["<|begin_of_text|>", "<|end_of_text|>", "<|eot_id|>"], True)
    bos = tk.token_to_id("<|begin_of_text|>")
    tk.post_processor = processors.Sequence([
        processors.ByteLevel(trim_offsets=False),
        processors.TemplateProcessing(single="<|begin_of_text|> $A", pair="<|begin_of_text|> $A <|begin_of_text|>:1 $B:1",
                                      special_tokens=[("<|begin_of_text|>", bos)]),
    ])
    tk.decoder = decoders.ByteLevel()
    return tk


def make_splitbpe_nfc(lines, tmp):
    """Qwen2's tokenizer.json layout."""
    from tokenizers import decoders, normalizers, processors

    tk = _byte_level_bpe(lines, QWEN2_PATTERN, ["<|endoftext|>", "<|im_start|>", "<|im_end|>"], False)
    tk.normalizer = normalizers.NFC()
    tk.post_processor = processors.ByteLevel(trim_offsets=False)
    tk.decoder = decoders.ByteLevel()
    return tk


BYTE_TOKENS = [f"<0x{b:02X}>" for b in range(256)]


def _sentencepiece_bpe(lines):
    """BPE over Metaspace words (merges never cross a word start), with the 256 byte tokens in the
    vocabulary as SentencePiece's byte_fallback puts them, after <unk>, <s>, </s>."""
    from tokenizers import Tokenizer, models, pre_tokenizers, trainers

    tk = Tokenizer(models.BPE(unk_token="<unk>", byte_fallback=True, fuse_unk=True))
    tk.pre_tokenizer = pre_tokenizers.Metaspace(replacement="▁", prepend_scheme="always", split=True)
    tk.train_from_iterator(lines, trainers.BpeTrainer(
        vocab_size=VOCAB, min_frequency=2, special_tokens=["<unk>", "<s>", "</s>"] + BYTE_TOKENS,
        limit_alphabet=90, show_progress=False))
    return tk


def _bytes_as_vocabulary(tk):
    """The byte tokens stay in the model's vocabulary but are not added tokens (as in Llama 2's file)."""
    from tokenizers import Tokenizer

    cfg = json.loads(tk.to_str())
    cfg["added_tokens"] = [a for a in cfg["added_tokens"] if a["content"] not in BYTE_TOKENS]
    return Tokenizer.from_str(json.dumps(cfg))


def make_spbpe(lines, tmp):
    """Llama 2's tokenizer.json layout (LlamaTokenizerFast, legacy conversion)."""
    from tokenizers import Regex, decoders, normalizers, processors

    tk = _sentencepiece_bpe(lines)
    tk.normalizer = normalizers.Sequence([normalizers.Prepend("▁"), normalizers.Replace(" ", "▁")])
    tk.pre_tokenizer = None
    bos = tk.token_to_id("<s>")
    tk.post_processor = processors.TemplateProcessing(single="<s> $A", pair="<s> $A <s>:1 $B:1",
                                                      special_tokens=[("<s>", bos)])
    tk.decoder = decoders.Sequence([decoders.Replace("▁", " "), decoders.ByteFallback(), decoders.Fuse(),
                                    decoders.Strip(content=" ", left=1, right=0)])
    return _bytes_as_vocabulary(tk)


def make_metaspace_bpe(lines, tmp):
    """Mistral's tokenizer.json layout (non-legacy conversion): Metaspace, prepend_scheme first."""
    from tokenizers import decoders, pre_tokenizers, processors

    tk = _sentencepiece_bpe(lines)
    tk.normalizer = None
    tk.pre_tokenizer = pre_tokenizers.Metaspace(replacement="▁", prepend_scheme="first", split=False)
    bos = tk.token_to_id("<s>")
    tk.post_processor = processors.TemplateProcessing(single="<s> $A", pair="<s> $A <s>:1 $B:1",
                                                      special_tokens=[("<s>", bos)])
    tk.decoder = decoders.Sequence([decoders.Metaspace(replacement="▁", prepend_scheme="first", split=False),
                                    decoders.ByteFallback(), decoders.Fuse()])
    return _bytes_as_vocabulary(tk)


MAKERS = {"wordpiece": "make_wordpiece", "bpe": "make_bpe", "unigram": "make_unigram",
          "splitbpe": "make_splitbpe", "splitbpe-nfc": "make_splitbpe_nfc", "spbpe": "make_spbpe",
          "metaspace-bpe": "make_metaspace_bpe"}


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
    import argparse

    import sentencepiece as spm

    ap = argparse.ArgumentParser()
    ap.add_argument("families", nargs="*", help=f"which to (re)make (default: all of {sorted(MAKERS)})")
    ap.add_argument("--no-pairs", action="store_true", help="leave the parity pairs as they are")
    args = ap.parse_args()
    spm.set_random_generator_seed(7)
    lines = corpus_lines()
    for name in args.families or MAKERS:
        make = globals()[MAKERS[name]]
        with tempfile.TemporaryDirectory() as tmp:
            tk = make(lines, tmp)
            d = os.path.join(OUT, name)
            os.makedirs(d, exist_ok=True)
            tk.save(os.path.join(d, "tokenizer.json"))
            print(name, tk.get_vocab_size(), "tokens ->", d)
    if not args.no_pairs:
        write_parity_pairs()


if __name__ == "__main__":
    main()
