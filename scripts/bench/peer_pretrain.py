"""The peer of `tinct pretrain` in the benchmark: the same workload written as a
practitioner writes it in plain PyTorch (Debian's python3-torch and python3-torchvision).

The model is built to match tinct's layer for layer: torchvision's resnet18 (or the
compact encoder) with a 12-band stem, and the same colour decoder (one bilinear x2
upsampling step per halving of the resolution down to full resolution, the encoder's stage
at that stride concatenated, 3 x 3 conv + batch norm + ReLU, channels halving from half the
deepest stage, then a 1 x 1 head to L, a, b). Masked smooth L1 (beta 0.1) on L/100, a/128,
b/128, AdamW (lr 2e-3, weight decay 1e-2), gradient norm clipped at 1. The compute-only step
is tinct_train_bench's: preloaded random tensors, plain smooth L1, AdamW lr 1e-3.

Data: the store's bands.bin, colour.bin and valid.bin as numpy memory maps, normalised
with the manifest's statistics, random flips and quarter turns, through a DataLoader.

Time to quality: tinct's schedule (linear warm-up, then cosine to 0 at the last step), every
fifth chip held out (tinct holds out spatial blocks, 20 %: on the bench's homogeneous store
the two sets are alike), validated in eval mode every EVERY steps on the first VAL_CHIPS of
them with tinct's delta E (CIE76 in Lab units, mean over valid pixels).

usage: peer_pretrain.py step ENCODER BANDS CHIP BATCH STEPS THREADS [channels_last 0|1]
       peer_pretrain.py loop STORE ENCODER BATCH STEPS THREADS WORKERS [channels_last 0|1]
       peer_pretrain.py quality STORE ENCODER BATCH STEPS THREADS WORKERS WARMUP EVERY VAL_CHIPS
       peer_pretrain.py matmul SIZE THREADS
Prints one line: `chips_per_s` (step, loop) or `gflops` (matmul); quality prints one line
per validation: `step seconds delta_e` (training seconds so far, validations included)."""
import math
import os
import sys
import time

import numpy as np
import torch
import torch.nn as nn
import torch.nn.functional as F
import torchvision
import yaml


def conv_bn_init(module):
    for m in module.modules():
        if isinstance(m, nn.Conv2d):
            nn.init.kaiming_normal_(m.weight, mode="fan_out", nonlinearity="relu")
        elif isinstance(m, nn.BatchNorm2d):
            nn.init.ones_(m.weight)
            nn.init.zeros_(m.bias)


class ResNet18Encoder(nn.Module):
    """torchvision's resnet18 with a BANDS-channel stem; returns every stage."""
    strides = [2, 4, 4, 8, 16, 32]
    channels = [64, 64, 64, 128, 256, 512]

    def __init__(self, bands):
        super().__init__()
        net = torchvision.models.resnet18(weights=None)
        net.conv1 = nn.Conv2d(bands, 64, 7, stride=2, padding=3, bias=False)
        self.conv1, self.bn1, self.maxpool = net.conv1, net.bn1, net.maxpool
        self.layers = nn.ModuleList([net.layer1, net.layer2, net.layer3, net.layer4])
        conv_bn_init(self)

    def forward(self, x):
        x = F.relu(self.bn1(self.conv1(x)))
        stages = [x]
        x = self.maxpool(x)
        stages.append(x)
        for layer in self.layers:
            x = layer(x)
            stages.append(x)
        return stages


def conv3x3(cin, cout, stride=1):
    return nn.Conv2d(cin, cout, 3, stride=stride, padding=1, bias=False)


class CompactStage(nn.Module):
    def __init__(self, cin, cout):
        super().__init__()
        self.down, self.down_bn = conv3x3(cin, cout, 2), nn.BatchNorm2d(cout)
        self.conv, self.bn = conv3x3(cout, cout), nn.BatchNorm2d(cout)

    def forward(self, x):
        x = F.relu(self.down_bn(self.down(x)))
        return F.relu(x + self.bn(self.conv(x)))


class CompactEncoder(nn.Module):
    strides = [1, 2, 4, 8, 16]
    channels = [16, 32, 64, 128, 256]

    def __init__(self, bands):
        super().__init__()
        c = self.channels
        self.stem, self.stem_bn = conv3x3(bands, c[0]), nn.BatchNorm2d(c[0])
        self.stages = nn.ModuleList([CompactStage(c[i], c[i + 1]) for i in range(4)])
        conv_bn_init(self)

    def forward(self, x):
        x = F.relu(self.stem_bn(self.stem(x)))
        stages = [x]
        for stage in self.stages:
            x = stage(x)
            stages.append(x)
        return stages


class DecoderStep(nn.Module):
    def __init__(self, cin, cskip, cout):
        super().__init__()
        self.conv, self.bn = conv3x3(cin + cskip, cout), nn.BatchNorm2d(cout)

    def forward(self, x, skip):
        x = F.interpolate(x, scale_factor=2, mode="bilinear", align_corners=False)
        if skip is not None:
            x = torch.cat([x, skip], 1)
        return F.relu(self.bn(self.conv(x)))


class ColourDecoder(nn.Module):
    """tinct's decoder: from the deepest stride down to 1, one step per halving."""

    def __init__(self, channels, strides):
        super().__init__()
        cin, cout = channels[-1], channels[-1] // 2
        self.steps, self.skips = nn.ModuleList(), []
        stride = strides[-1] // 2
        while stride >= 1:
            cout = max(cout, 8)
            skip = max([i for i in range(len(strides) - 1) if strides[i] == stride], default=None)
            self.steps.append(DecoderStep(cin, channels[skip] if skip is not None else 0, cout))
            self.skips.append(skip)
            cin, cout, stride = cout, cout // 2, stride // 2
        conv_bn_init(self)
        self.head = nn.Conv2d(cin, 3, 1)

    def forward(self, stages):
        x = stages[-1]
        for step, skip in zip(self.steps, self.skips):
            x = step(x, stages[skip] if skip is not None else None)
        return self.head(x)


class ColourModel(nn.Module):
    def __init__(self, encoder, bands):
        super().__init__()
        self.encoder = ResNet18Encoder(bands) if encoder == "resnet18" else CompactEncoder(bands)
        self.decoder = ColourDecoder(self.encoder.channels, self.encoder.strides)

    def forward(self, x):
        return self.decoder(self.encoder(x))


def masked_smooth_l1(pred, target, valid):
    per_pixel = F.smooth_l1_loss(pred, target, reduction="none", beta=0.1).sum(1)
    mask = valid.bool()
    return per_pixel.masked_fill(~mask, 0).sum() / mask.sum().clamp_min(1) / 3


class StoreChips(torch.utils.data.Dataset):
    def __init__(self, store):
        with open(os.path.join(store, "manifest.yaml")) as f:
            manifest = yaml.safe_load(f)
        size, bands = manifest["chip_size"], manifest["bands"]
        count = manifest["chip_count"]
        dtype = np.uint16 if bands[0]["storage"] == "uint16" else np.float32
        self.bands = np.memmap(os.path.join(store, "bands.bin"), dtype, "r", shape=(count, len(bands), size, size))
        self.colour = np.memmap(os.path.join(store, "colour.bin"), np.uint8, "r", shape=(count, 3, size, size))
        self.valid = np.memmap(os.path.join(store, "valid.bin"), np.uint8, "r", shape=(count, size, size))
        stats = manifest["statistics"]
        scale = np.array([b["scale"] for b in bands], np.float32)[:, None, None]
        offset = np.array([b["offset"] for b in bands], np.float32)[:, None, None]
        mean = np.array([stats[b["name"]]["mean"] for b in bands], np.float32)[:, None, None]
        std = np.array([stats[b["name"]]["std"] for b in bands], np.float32)[:, None, None]
        # (stored + offset) * scale - mean) / std as one multiply-add
        self.gain, self.bias = scale / std, (offset * scale - mean) / std
        self.lab_gain = np.array([100 / 255 / 100, 1 / 128, 1 / 128], np.float32)[:, None, None]
        self.lab_bias = np.array([0, -1, -1], np.float32)[:, None, None]

    def __len__(self):
        return len(self.bands)

    def plain(self, i):
        """Chip i as the model sees it, without augmentation (validation)."""
        valid = self.valid[i].astype(bool)
        x = np.where(valid, self.bands[i].astype(np.float32) * self.gain + self.bias, 0).astype(np.float32)
        y = self.colour[i].astype(np.float32) * self.lab_gain + self.lab_bias
        return torch.from_numpy(x), torch.from_numpy(y), torch.from_numpy(valid)

    def __getitem__(self, i):
        valid = self.valid[i].astype(bool)
        x = np.where(valid, self.bands[i].astype(np.float32) * self.gain + self.bias, 0).astype(np.float32)
        y = self.colour[i].astype(np.float32) * self.lab_gain + self.lab_bias
        k, flip = np.random.randint(4), np.random.randint(2)
        x, y, valid = (np.rot90(a, k, axes=(-2, -1)) for a in (x, y, valid))
        if flip:
            x, y, valid = (a[..., ::-1] for a in (x, y, valid))
        return torch.from_numpy(x.copy()), torch.from_numpy(y.copy()), torch.from_numpy(valid.copy())


def make_training(encoder, bands, channels_last, plain=False):
    torch.manual_seed(0)
    model = ColourModel(encoder, bands)
    if channels_last:
        model = model.to(memory_format=torch.channels_last)
    optimizer = torch.optim.AdamW(model.parameters(), lr=2e-3, weight_decay=1e-2)

    def step(x, y, valid):
        if channels_last:
            x = x.contiguous(memory_format=torch.channels_last)
        if plain:  # exactly tinct_train_bench's step: unmasked smooth L1, no clipping
            loss = F.smooth_l1_loss(model(x), y)
        else:
            loss = masked_smooth_l1(model(x), y, valid)
        optimizer.zero_grad()
        loss.backward()
        if not plain:
            torch.nn.utils.clip_grad_norm_(model.parameters(), 1.0)
        optimizer.step()
        return loss

    step.optimizer = optimizer
    return model, step


def compute_only(encoder, bands, chip, batch, steps, channels_last):
    _, step = make_training(encoder, bands, channels_last, plain=True)
    x = torch.randn(batch, bands, chip, chip)
    y = torch.rand(batch, 3, chip, chip)
    valid = torch.ones(batch, chip, chip, dtype=torch.bool)
    for _ in range(3):
        step(x, y, valid)
    start = time.perf_counter()
    for _ in range(steps):
        step(x, y, valid)
    return steps * batch / (time.perf_counter() - start)


def full_loop(store, encoder, batch, steps, workers, channels_last):
    data = StoreChips(store)
    loader = torch.utils.data.DataLoader(data, batch_size=batch, shuffle=True, drop_last=True,
                                         num_workers=workers, persistent_workers=workers > 0)
    _, step = make_training(encoder, data.bands.shape[1], channels_last)
    warmup, done, start = 2, 0, None
    while done < warmup + steps:
        for x, y, valid in loader:
            if done == warmup:
                start = time.perf_counter()
            step(x, y, valid)
            done += 1
            if done == warmup + steps:
                break
    return steps * batch / (time.perf_counter() - start)


def delta_e(model, data, chips, batch):
    lab_scale = torch.tensor([100.0, 128.0, 128.0]).view(1, 3, 1, 1)
    model.eval()
    total, pixels = 0.0, 0.0
    with torch.no_grad():
        for start in range(0, len(chips), batch):
            x, y, valid = zip(*(data.plain(i) for i in chips[start:start + batch]))
            x, y, valid = torch.stack(x), torch.stack(y), torch.stack(valid).bool()
            per_pixel = ((model(x) - y) * lab_scale).double().pow(2).sum(1).sqrt()
            total += per_pixel[valid].sum().item()
            pixels += valid.sum().item()
    model.train()
    return total / max(pixels, 1)


def quality(store, encoder, batch, steps, workers, warmup, every, val_chips):
    data = StoreChips(store)
    held = list(range(4, len(data), 5))
    training = torch.utils.data.Subset(data, [i for i in range(len(data)) if i % 5 != 4])
    loader = torch.utils.data.DataLoader(training, batch_size=batch, shuffle=True, drop_last=True,
                                         num_workers=workers, persistent_workers=workers > 0)
    model, step = make_training(encoder, data.bands.shape[1], False)
    optimizer = step.optimizer
    schedule = torch.optim.lr_scheduler.LambdaLR(optimizer, lambda s: (s + 1) / warmup if s < warmup else
                                                 0.5 * (1 + math.cos(math.pi * (s - warmup) / max(1, steps - warmup))))
    done, start = 0, time.perf_counter()
    while done < steps:
        for x, y, valid in loader:
            step(x, y, valid)
            schedule.step()
            done += 1
            if done % every == 0 or done == steps:
                seconds = time.perf_counter() - start
                print(f"{done} {seconds:.2f} {delta_e(model, data, held[:val_chips], batch):.4f}", flush=True)
            if done == steps:
                break


def matmul_gflops(size):
    a = np.random.default_rng(0).standard_normal((size, size), dtype=np.float32)
    b = a.T.copy()
    a @ b
    best = float("inf")
    for _ in range(5):
        start = time.perf_counter()
        a @ b
        best = min(best, time.perf_counter() - start)
    return 2.0 * size ** 3 / best / 1e9


def main(argv):
    mode = argv[1]
    if mode == "step":
        encoder, bands, chip, batch, steps, threads = argv[2], *map(int, argv[3:8])
        torch.set_num_threads(threads)
        print(f"{compute_only(encoder, bands, chip, batch, steps, len(argv) > 8 and argv[8] == '1'):.2f}")
    elif mode == "loop":
        store, encoder, (batch, steps, threads, workers) = argv[2], argv[3], map(int, argv[4:8])
        torch.set_num_threads(threads)
        print(f"{full_loop(store, encoder, batch, steps, workers, len(argv) > 8 and argv[8] == '1'):.2f}")
    elif mode == "quality":
        store, encoder, (batch, steps, threads, workers, warmup, every, val_chips) = argv[2], argv[3], map(int, argv[4:11])
        torch.set_num_threads(threads)
        quality(store, encoder, batch, steps, workers, warmup, every, val_chips)
    elif mode == "matmul":
        print(f"{matmul_gflops(int(argv[2])):.2f}")  # numpy's BLAS; threads from OPENBLAS_NUM_THREADS
    else:
        sys.exit(__doc__)


if __name__ == "__main__":
    main(sys.argv)
